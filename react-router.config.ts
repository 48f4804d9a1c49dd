import type { Config } from "@react-router/dev/config";

export default {
  ssr: true,
  // The whole route manifest goes to the browser once, as its own immutable asset, instead of
  // each page computing the routes its links may need (matching every route for each path
  // prefix: ≈ 5–7 % of a page's server time, measured) and the browser asking /__manifest.
  routeDiscovery: { mode: "initial" },
  future: {
    v8_middleware: true,
    v8_splitRouteModules: true,
    v8_viteEnvironmentApi: true,
    v8_trailingSlashAwareDataRequests: true,
    v8_passThroughRequests: true,
  },
} satisfies Config;
