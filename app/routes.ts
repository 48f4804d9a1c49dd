import { index, layout, prefix, route, type RouteConfig } from "@react-router/dev/routes";

export default [
  index("routes/home.tsx"),
  layout("routes/auth/layout.tsx", [
    route("login", "routes/auth/login.tsx"),
    route("signup", "routes/auth/signup.tsx"),
    route("forgot-password", "routes/auth/forgot-password.tsx"),
    route("reset-password/:token", "routes/auth/reset-password.tsx"),
    route("invitations/:token", "routes/auth/invitation.tsx"),
  ]),
  route("logout", "routes/auth/logout.tsx"),
  route("account", "routes/account.tsx"),
  route("theme", "routes/theme.tsx"),
  route("outbox", "routes/outbox.tsx"),
  route("healthz", "routes/healthz.ts"),
  route("o/:organisation", "routes/organisation/layout.tsx", [
    index("routes/organisation/index.tsx"),
    route("devices", "routes/organisation/devices/fleet.tsx"),
    route("devices/new", "routes/organisation/devices/new.tsx"),
    route("devices/import", "routes/organisation/devices/import.tsx"),
    route("devices/:device", "routes/organisation/devices/device/layout.tsx", [
      index("routes/organisation/devices/device/overview.tsx"),
      route("analysis", "routes/organisation/devices/device/analysis.tsx"),
      route("reach", "routes/organisation/devices/device/reach.tsx"),
      route("exposure", "routes/organisation/devices/device/exposure.tsx"),
      route("model/:section", "routes/organisation/devices/device/section.tsx"),
      route("history", "routes/organisation/devices/device/history.tsx"),
      // Resource routes sit inside the device layout so its middleware resolves the device for them too.
      route("revisions/:revision/export", "routes/organisation/devices/device/export.ts"),
      route("api/trace", "routes/organisation/devices/device/api.trace.ts"),
      route("reach.csv", "routes/organisation/devices/device/reach.csv.ts"),
      route("exposure.csv", "routes/organisation/devices/device/exposure.csv.ts"),
      route("dismissals", "routes/organisation/devices/device/dismissals.ts"),
    ]),
    route("sites", "routes/organisation/sites.tsx"),
    route("findings", "routes/organisation/findings.tsx"),
    route("training", "routes/organisation/training.tsx"),
    ...prefix("settings", [
      layout("routes/organisation/settings/layout.tsx", [
        index("routes/organisation/settings/index.tsx"),
        route("members", "routes/organisation/settings/members.tsx"),
        route("organisation", "routes/organisation/settings/organisation.tsx"),
        route("shared-objects", "routes/organisation/settings/shared-objects.tsx"),
        route("audit", "routes/organisation/settings/audit.tsx"),
      ]),
    ]),
    route("*", "routes/organisation/not-found.tsx"),
  ]),
  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
