import { data, isRouteErrorResponse, Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteLoaderData } from "react-router";
import type { Route } from "./+types/root";
import "./app.css";
import { signedInMiddleware, signedInOf } from "#server/auth/guard.server";
import { readFlash } from "#server/auth/flash.server";
import { serverTimingMiddleware } from "#server/http/server-timing.server";
import { readTheme } from "#server/http/theme.server";
import { isOutboxEnabled } from "#server/config.server";
import { Toast } from "./components/ui/toast";
import { useNonce } from "./utils/nonce";
import { BrandMark } from "./components/brand";

// Query accounting around everything, then who is asking, resolved once per request for every route below.
export const middleware: Route.MiddlewareFunction[] = [serverTimingMiddleware, signedInMiddleware];

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
  let title = "Something went wrong";
  let message = "An unexpected error occurred. The team has the details in the server log.";
  let stack: string | undefined;
  if (isRouteErrorResponse(error)) {
    title = error.status === 404 ? "Not found" : error.status === 403 ? "Not allowed" : `${error.status} ${error.statusText || "Error"}`;
    const payload: unknown = error.data;
    if (payload && typeof payload === "object" && "message" in payload && typeof payload.message === "string") message = payload.message;
    else if (typeof payload === "string" && payload) message = payload;
    else if (error.status === 404) message = "There is nothing at this address, or you do not have access to it.";
  } else if (import.meta.env.DEV && error instanceof Error) {
    message = error.message;
    stack = error.stack;
  }
  return (
    <main className="mx-auto flex min-h-screen max-w-xl flex-col justify-center px-6 py-16">
      <div className="mb-6 flex items-center gap-2 text-harbour">
        <BrandMark className="size-7" />
        <span className="font-semibold">Sallyport</span>
      </div>
      <h1 className="text-display">{title}</h1>
      <p className="mt-3 text-ink-muted">{message}</p>
      {stack ? <pre className="mt-6 overflow-x-auto rounded-control bg-surface-sunken p-4 text-xs">{stack}</pre> : null}
      <p className="mt-8">
        <a href="/" className="font-medium text-harbour underline underline-offset-4">
          Back to the start page
        </a>
      </p>
    </main>
  );
}
