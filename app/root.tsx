import { data, Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteLoaderData } from "react-router";
import { useEffect } from "react";
import type { Route } from "./+types/root";
import "./app.css";
import { signedInMiddleware, signedInOf } from "#server/auth/guard.server";
import { readFlash } from "#server/auth/flash.server";
import { serverTimingMiddleware } from "#server/http/server-timing.server";
import { failureStatusMiddleware } from "#server/http/failures.server";
import { readTheme } from "#server/http/theme.server";
import { isOutboxEnabled } from "#server/config.server";
import { Toast } from "./components/ui/toast";
import { useNonce } from "./utils/nonce";
import { StandaloneError } from "./components/error-panel";

// Failures outside the request's control (database unreachable → 503, a lost unique race → 409)
// around everything, then query accounting, then who is asking, resolved once per request.
export const middleware: Route.MiddlewareFunction[] = [failureStatusMiddleware, serverTimingMiddleware, signedInMiddleware];

export const links: Route.LinksFunction = () => [{ rel: "icon", href: "/favicon.svg", type: "image/svg+xml" }];

export async function loader({ request, context }: Route.LoaderArgs) {
  const signedIn = signedInOf(context);
  const [theme, { flash, clearCookie }] = await Promise.all([readTheme(request), readFlash(request)]);
  return data(
    {
      user: signedIn ? { id: signedIn.user.id, name: signedIn.user.name, email: signedIn.user.email } : null,
      theme,
      flash,
      outboxEnabled: isOutboxEnabled(),
    },
    { headers: clearCookie ? { "Set-Cookie": clearCookie } : undefined },
  );
}

export function Layout({ children }: { children: React.ReactNode }) {
  const rootData = useRouteLoaderData<typeof loader>("root");
  const nonce = useNonce();
  const theme = rootData?.theme ?? "system";
  // Marks the page as hydrated, so browser tests know its scripts have run (and logged whatever they log).
  useEffect(() => {
    document.documentElement.dataset.hydrated = "true";
  }, []);
  return (
    <html lang="en" data-theme={theme === "system" ? undefined : theme}>
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen">
        {children}
        <Toast toast={rootData?.flash ?? null} />
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export default function App() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <StandaloneError error={error} />;
}
