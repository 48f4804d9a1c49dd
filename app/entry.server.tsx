import { PassThrough } from "node:stream";
import type { EntryContext, HandleErrorFunction, RouterContextProvider } from "react-router";
import { createReadableStreamFromReadable } from "@react-router/node";
import { ServerRouter } from "react-router";
import { isbot } from "isbot";
import type { RenderToPipeableStreamOptions } from "react-dom/server";
import { renderToPipeableStream } from "react-dom/server";
import { NonceContext } from "./utils/nonce";
import { getDatabase } from "#server/db/database.server";
import { requestFactsContext } from "#server/http/request-context.server";
import { noteFailure } from "#server/http/failures.server";
import { startProcessJobs } from "#server/jobs/worker.server";

// Registers the models once, when the server build loads, before any route module runs.
getDatabase();
// Background analysis of saved revisions in this process (docs/decisions/018).
startProcessJobs();

export const streamTimeout = 5_000;

// Every error a loader, action or render threw: an unreachable database or a lost unique-constraint
// race is noted so the root middleware answers 503 or 409 (server/http/failures.server.ts) and is
// logged in one line; anything else is logged whole, as React Router's default does.
export const handleError: HandleErrorFunction = (error, { request }) => {
  if (request.signal.aborted) return;
  const kind = noteFailure(error);
  if (kind) console.error(`${request.method} ${new URL(request.url).pathname}: ${kind === "outage" ? "database unreachable" : "unique constraint lost to a concurrent request"} (${error instanceof Error ? error.message : String(error)})`);
  else console.error(error);
};

// The framework's default entry, plus the CSP nonce for every inline script it writes.
export default function handleRequest(request: Request, responseStatusCode: number, responseHeaders: Headers, routerContext: EntryContext, loadContext: RouterContextProvider) {
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }
  const nonce = loadContext.get(requestFactsContext).cspNonce || undefined;
  return new Promise((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption: keyof RenderToPipeableStreamOptions = (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    const { pipe, abort } = renderToPipeableStream(
      <NonceContext.Provider value={nonce}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce} />
      </NonceContext.Provider>,
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
          const stream = createReadableStreamFromReadable(body);
          responseHeaders.set("Content-Type", "text/html; charset=utf-8");
          pipe(body);
          resolve(new Response(stream, { headers: responseHeaders, status: responseStatusCode }));
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
