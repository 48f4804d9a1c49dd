import { Writable } from "node:stream";
import type { EntryContext, HandleErrorFunction, RouterContextProvider } from "react-router";
import { ServerRouter } from "react-router";
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

// The framework's default entry, plus the CSP nonce for every inline script it writes, with the
// page rendered whole into memory: no route streams deferred data (docs/decisions/023), and the
// writer (server/http/respond.server.ts) sends a page in one write anyway. Collected here, the
// page goes over as one buffer instead of through a Node stream turned into a web stream that the
// writer reads back chunk by chunk (docs/decisions/025).
export default function handleRequest(request: Request, responseStatusCode: number, responseHeaders: Headers, routerContext: EntryContext, loadContext: RouterContextProvider) {
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }
  const nonce = loadContext.get(requestFactsContext).cspNonce || undefined;
  return new Promise<Response>((resolve, reject) => {
    let shellRendered = false;
    const chunks: Buffer[] = [];
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    const page = new Writable({
      write(chunk: Buffer, _encoding, callback) {
        chunks.push(chunk);
        callback();
      },
      final(callback) {
        clearTimeout(timeoutId);
        timeoutId = undefined;
        responseHeaders.set("Content-Type", "text/html; charset=utf-8");
        resolve(new Response(Buffer.concat(chunks), { headers: responseHeaders, status: responseStatusCode }));
        callback();
      },
    });
    const { pipe, abort } = renderToPipeableStream(
      <NonceContext.Provider value={nonce}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce} />
      </NonceContext.Provider>,
      {
        nonce,
        onShellReady() {
          shellRendered = true;
        },
        onAllReady() {
          pipe(page);
        },
        onShellError(error: unknown) {
          clearTimeout(timeoutId);
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
