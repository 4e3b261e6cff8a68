// npm run bench: the cost of the hot paths. Figures, not pass/fail.
import { hash, verify } from "@node-rs/argon2";
import { benchEngine } from "./engine";

const percentile = (xs: number[], p: number) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor((p / 100) * xs.length))];
async function time(label: string, n: number, fn: () => Promise<unknown>) {
  const samples: number[] = [];
  for (let i = 0; i < n; i++) {
    const t0 = performance.now();
    await fn();
    samples.push(performance.now() - t0);
  }
  console.log(`${label.padEnd(44)} p50 ${percentile(samples, 50).toFixed(1)} ms   p95 ${percentile(samples, 95).toFixed(1)} ms   (n=${n})`);
}

console.log("Engine");
benchEngine();
console.log("\nSign-in and pages");
const stored = await hash("a-long-test-password");
await time("argon2id hash (set password or PIN)", 20, () => hash("a-long-test-password"));
await time("argon2id verify (sign-in, PIN entry)", 20, () => verify(stored, "a-long-test-password"));

const app = process.env.APP_URL ?? "http://127.0.0.1:3000";
const up = await fetch(`${app}/healthz`).then((r) => r.ok, () => false);
if (!up) {
  console.log(`(no app at ${app}: start one with npm run demo to measure pages)`);
} else {
  await time("GET /signin (document, with CSRF cookie)", 100, () => fetch(`${app}/signin`).then((r) => r.text()));
  const jar: string[] = [];
  const page = await fetch(`${app}/signin`);
  jar.push(...page.headers.getSetCookie().map((c) => c.split(";")[0]));
  const csrfToken = /name="csrfToken" value="([^"]+)"/.exec(await page.text())![1];
  const res = await fetch(`${app}/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: jar.join("; "), origin: app },
    body: new URLSearchParams({ email: "dana@marlowe-finch.example", password: "cool-down-demo", csrfToken, callbackUrl: "/" }),
  });
  jar.push(...res.headers.getSetCookie().map((c) => c.split(";")[0]));
  const cookie = jar.join("; ");
  const home = await fetch(`${app}/`, { headers: { cookie }, redirect: "manual" });
  const site = home.headers.get("location") ?? "/account";
  await time(`GET ${new URL(site, app).pathname.slice(0, 16)}… (signed-in page)`, 100, () => fetch(new URL(site, app), { headers: { cookie } }).then((r) => r.text()));
}
