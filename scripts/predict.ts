// npm run --silent predict < request.json: one JSON request on stdin, one JSON response on stdout.
// Bad input: a JSON object with a message per field on stdout, exit code 2.
import { runPredictRequest } from "../app/lib/engine/request";

const chunks: Buffer[] = [];
for await (const chunk of process.stdin) chunks.push(chunk as Buffer);
const text = Buffer.concat(chunks).toString("utf8");
let body: unknown;
try {
  body = JSON.parse(text);
} catch (e) {
  process.stdout.write(JSON.stringify({ errors: { request: `not valid JSON: ${(e as Error).message}` } }) + "\n");
  process.exit(2);
}
const result = runPredictRequest(body);
if (!result.ok) {
  process.stdout.write(JSON.stringify({ errors: result.errors }) + "\n");
  process.exit(2);
}
process.stdout.write(JSON.stringify(result.response) + "\n");
