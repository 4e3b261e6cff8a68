import { createReadableStreamFromReadable } from "@react-router/node";
import { isbot } from "isbot";
import { randomBytes } from "node:crypto";
import { PassThrough } from "node:stream";
import { renderToPipeableStream, type RenderToPipeableStreamOptions } from "react-dom/server";
import { ServerRouter, type EntryContext, type RouterContextProvider } from "react-router";
import { startAlertWorker, stopAlertWorker } from "./server/alert-worker.server";
import { env } from "./server/env.server";
import { contentSecurityPolicy } from "./server/security.server";

// Every app process also works the alert queue and sweeps for deadlines (see alert-worker.server.ts),
// so alerts fire on time with no page open. ALERT_WORKER=false leaves it to other processes.
if (env.ALERT_WORKER) {
  startAlertWorker().catch((e) => console.error("The alert worker did not start:", e));
  // The server closes its port on these signals; the queue's timers would keep the process alive, so
  // the worker stops (finishing a send in progress, at most 5 s) and the process ends.
  for (const signal of ["SIGTERM", "SIGINT"] as const) {
    process.once(signal, () => {
      setTimeout(() => process.exit(0), 5000).unref();
      stopAlertWorker().finally(() => process.exit(0));
    });
  }
}

export const streamTimeout = 5_000;

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  _loadContext: RouterContextProvider,
) {
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }
  // A fresh nonce per document: the only inline scripts allowed are the router's own.
  const nonce = randomBytes(16).toString("base64");
  responseHeaders.set("Content-Security-Policy", contentSecurityPolicy(nonce));

  return new Promise<Response>((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption: keyof RenderToPipeableStreamOptions =
      (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);

    const { pipe, abort } = renderToPipeableStream(
      <ServerRouter context={routerContext} url={request.url} nonce={nonce} />,
      {
        nonce,
        [readyOption]() {
          shellRendered = true;
          const body = new PassThrough({
            final(callback) {
              clearTimeout(timeoutId);
              timeoutId = undefined;
              callback();
            },
          });
          responseHeaders.set("Content-Type", "text/html; charset=utf-8");
          pipe(body);
          resolve(new Response(createReadableStreamFromReadable(body), { headers: responseHeaders, status: responseStatusCode }));
        },
        onShellError(error: unknown) {
          reject(error);
        },
        onError(error: unknown) {
          responseStatusCode = 500;
          if (shellRendered) console.error(error);
        },
      },
    );
  });
}
