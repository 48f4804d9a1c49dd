// The HTTP server: security headers, the same-origin guard, static files and React Router.
// `npm start` runs it in production mode on the build; `npm run dev` with Vite's middleware.
import { readdirSync } from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import { fileURLToPath } from "node:url";
import compression from "compression";
import express from "express";
import type { ServerBuild } from "react-router";
import { appOrigin, getEnvironment, isOutboxEnabled, listensOnLoopbackOnly } from "../config.server.ts";
import { outboxLink } from "../mail/outbox-access.server.ts";
import { FairAdmission, takingTurns } from "./admission.server.ts";
import { createRequestContext } from "./request-context.server.ts";
import { createRequestHandler } from "./respond.server.ts";
import { canonicalOrigin, clientAddressOf, requestSizeLimit, requestTextGuard, sameOriginGuard, securityHeaders } from "./security.ts";
import { MAX_DOCUMENT_REQUEST_BYTES, MAX_REQUEST_BYTES } from "../validation/limits.ts";
import { stopProcessJobs } from "../jobs/worker.server.ts";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");
// Read and checked before anything listens: production without APP_ORIGIN stops here.
const environment = getEnvironment();
const development = environment.NODE_ENV !== "production";
const port = environment.PORT;
const host = environment.HOST;

const app = express();
app.disable("x-powered-by");
app.set("trust proxy", environment.TRUST_PROXY === "1");
// The fastest settings: on 35 KB of the app's JavaScript brotli quality 1 took 0.55 ms and gzip
// level 1 1.2 ms, against 3.5 ms each at the library's defaults (quality 4, level 6), for a body
// 16–21 % larger (measured on the loaded machine; docs/decisions/023).
app.use(compression({ level: 1, brotli: { params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 1 } } }));
app.use(securityHeaders({ development }));
app.use(requestTextGuard());
// The routes that carry a whole model document take one as large as any export (server/validation/limits.ts).
// …and the REST API's two that take a model document (server/api/v1: create a device, propose a change).
const DOCUMENT_ROUTES = /^(\/o\/[^/]+\/devices\/(import|[^/]+\/api\/proposals)(\.data)?|\/api\/v1\/devices(\/[^/]+\/proposals)?)$/;
app.use(requestSizeLimit(Number(process.env.MAX_REQUEST_BYTES ?? MAX_REQUEST_BYTES), { paths: DOCUMENT_ROUTES, maximumBytes: MAX_DOCUMENT_REQUEST_BYTES }));
app.use(sameOriginGuard(appOrigin()));
app.use(canonicalOrigin(appOrigin()));

// React Router's middleware takes over from here: the guard resolves user, organisation and device.
function getLoadContext(request: express.Request, response: express.Response) {
  return createRequestContext({ clientAddress: clientAddressOf(request), cspNonce: String(response.locals.cspNonce ?? "") });
}

// Pages and API answers are worked a few at a time, organisations' users in fair turns
// (docs/decisions/024); static files do not wait.
const admission = new FairAdmission({ concurrency: environment.ADMISSION_CONCURRENCY });
// The flow: the organisation in the URL and whoever's credentials came (not yet checked: only the
// order of work depends on it, and an unknown one is refused cheaply in its turn).
const inTurn = (handler: express.RequestHandler) => takingTurns(admission, (request: express.Request) => request.get("authorization") ?? request.get("cookie") ?? clientAddressOf(request), handler, { sayWait: environment.ADMISSION_TIMING === "1" });

if (development) {
  const vite = await import("vite");
  // SALLYPORT_HMR=0 lets several development servers run side by side (tests, helpers).
  const viteServer = await vite.createServer({ root, server: { middlewareMode: true, hmr: process.env.SALLYPORT_HMR === "0" ? false : undefined } });
  app.use(viteServer.middlewares);
  app.all(/.*/, inTurn(async (request, response, next) => {
    try {
      const build = (await viteServer.ssrLoadModule("virtual:react-router/server-build")) as ServerBuild;
      return createRequestHandler({ build, mode: "development", getLoadContext })(request, response, next);
    } catch (error) {
      if (error instanceof Error) viteServer.ssrFixStacktrace(error);
      next(error);
    }
  }));
} else {
  const buildPath = path.join(root, "build/server/index.js");
  const build = (await import(buildPath)) as ServerBuild;
  app.use("/assets", express.static(path.join(root, "build/client/assets"), { immutable: true, maxAge: "1y" }));
  // The other public files (favicon, examples) by their first path segment, listed once: a page
  // request then costs no look on disk.
  const publicFiles = express.static(path.join(root, "build/client"), { maxAge: "1h" });
  const publicNames = new Set(readdirSync(path.join(root, "build/client")).filter((name) => name !== "assets"));
  app.use((request, response, next) => (publicNames.has(request.path.split("/")[1] ?? "") ? publicFiles(request, response, next) : next()));
  app.all(/.*/, inTurn(createRequestHandler({ build, mode: "production", getLoadContext })));
}

// Express 5 calls back with the error when the port cannot be had (EADDRINUSE): say so and stop.
const server = app.listen(port, host, (error?: Error) => {
  if (error) {
    console.error(`Sallyport could not listen on ${host}:${port}: ${error.message}. Is another server using the port? Set PORT.`);
    process.exit(1);
  }
  console.log(`Sallyport listening on ${host}:${port} (${development ? "development" : "production"}), served as ${appOrigin()}`);
  if (isOutboxEnabled()) console.log(`Local outbox (keep this link to yourself): ${outboxLink()}`);
  else if (environment.SALLYPORT_FAKE_SMTP === "1" && !listensOnLoopbackOnly()) console.log("Local outbox: off, because the server listens beyond loopback (OUTBOX_BEYOND_LOOPBACK=1 opens it).");
});
// Idle keep-alive connections live longer than those of the clients and proxies in front of us
// (browsers keep them about a minute or more, a common load balancer's idle timeout is 60 s):
// with Node's 5 s default the server could close a connection just as a client reused it,
// which the client sees as "other side closed" (common practice, no source). headersTimeout must
// exceed keepAliveTimeout, or a request on a reused connection could be cut off by it.
server.keepAliveTimeout = 65_000;
server.headersTimeout = 66_000;
// The app (app/entry.server.tsx) works the job queue in this process unless SALLYPORT_JOBS=0; stopping lets running jobs end.
for (const signal of ["SIGINT", "SIGTERM"] as const) {
  process.on(signal, () => server.close(() => void stopProcessJobs().finally(() => process.exit(0))));
}
