// The HTTP server: security headers, the same-origin guard, static files and React Router.
// `npm start` runs it in production mode on the build; `npm run dev` with Vite's middleware.
import path from "node:path";
import { fileURLToPath } from "node:url";
import { createRequestHandler } from "@react-router/express";
import compression from "compression";
import express from "express";
import type { ServerBuild } from "react-router";
import { createRequestContext } from "./request-context.server.ts";
import { clientAddressOf, requestSizeLimit, sameOriginGuard, securityHeaders } from "./security.ts";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");
const development = process.env.NODE_ENV !== "production";
const port = Number.parseInt(process.env.PORT ?? "3000", 10);
const host = process.env.HOST ?? "127.0.0.1";

const app = express();
app.disable("x-powered-by");
app.set("trust proxy", process.env.TRUST_PROXY === "1");
app.use(compression());
app.use(securityHeaders({ development }));
app.use(requestSizeLimit(Number(process.env.MAX_REQUEST_BYTES ?? 2 * 1024 * 1024)));
app.use(sameOriginGuard());

// React Router's middleware takes over from here: the guard resolves user, organisation and device.
function getLoadContext(request: express.Request, response: express.Response) {
  return createRequestContext({ clientAddress: clientAddressOf(request), cspNonce: String(response.locals.cspNonce ?? "") });
}

if (development) {
  const vite = await import("vite");
  // SALLYPORT_HMR=0 lets several development servers run side by side (tests, helpers).
  const viteServer = await vite.createServer({ root, server: { middlewareMode: true, hmr: process.env.SALLYPORT_HMR === "0" ? false : undefined } });
  app.use(viteServer.middlewares);
  app.all(/.*/, async (request, response, next) => {
    try {
      const build = (await viteServer.ssrLoadModule("virtual:react-router/server-build")) as ServerBuild;
      return createRequestHandler({ build, mode: "development", getLoadContext })(request, response, next);
    } catch (error) {
      if (error instanceof Error) viteServer.ssrFixStacktrace(error);
      next(error);
    }
  });
} else {
  const buildPath = path.join(root, "build/server/index.js");
  const build = (await import(buildPath)) as ServerBuild;
  app.use("/assets", express.static(path.join(root, "build/client/assets"), { immutable: true, maxAge: "1y" }));
  app.use(express.static(path.join(root, "build/client"), { maxAge: "1h" }));
  app.all(/.*/, createRequestHandler({ build, mode: "production", getLoadContext }));
}

const server = app.listen(port, host, () => {
  console.log(`Sallyport listening on http://${host === "127.0.0.1" ? "localhost" : host}:${port} (${development ? "development" : "production"})`);
});
for (const signal of ["SIGINT", "SIGTERM"] as const) {
  process.on(signal, () => server.close(() => process.exit(0)));
}
