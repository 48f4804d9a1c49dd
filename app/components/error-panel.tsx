import { isRouteErrorResponse, Link, useParams, useRouteError } from "react-router";
import { BrandMark } from "./brand";
import { buttonClasses } from "./ui/button";

export type ErrorText = { status: number | null; title: string; message: string; stack?: string };

const STATUS_TITLES: Record<number, string> = {
  400: "Not understood",
  403: "Not allowed",
  404: "Not found",
  405: "Not possible here",
  409: "Changed meanwhile",
  413: "Too large",
  429: "Too many requests",
  503: "Not available just now",
};

const UNEXPECTED = "An unexpected error occurred. The team has the details in the server log.";

/** What to say about an error a loader or action threw: a refusal's own message, or a calm default. */
export function errorTextOf(error: unknown): ErrorText {
  if (isRouteErrorResponse(error)) {
    const payload: unknown = error.data;
    let message = UNEXPECTED;
    if (payload && typeof payload === "object" && "message" in payload && typeof payload.message === "string") message = payload.message;
    else if (typeof payload === "string" && payload) message = payload;
    else if (error.status === 404) message = "There is nothing at this address, or you do not have access to it.";
    // Our own words per status: the status text that reaches the browser after an in-app navigation can be another status's.
    const title = STATUS_TITLES[error.status] ?? (error.status >= 500 ? "Something went wrong" : "Not possible");
    return { status: error.status, title, message };
  }
  const text: ErrorText = { status: null, title: "Something went wrong", message: UNEXPECTED };
  if (import.meta.env.DEV && error instanceof Error) return { ...text, message: error.message, stack: error.stack };
  return text;
}

/**
 * An error shown inside the app's frame, so the navigation stays and there is a way back: to
 * where the person came from, or to a page they may open (`home`).
 */
export function ErrorPanel({ error, home, organisationName }: { error: unknown; home: { to: string; label: string }; organisationName?: string }) {
  const text = errorTextOf(error);
  return (
    <section aria-labelledby="error-title" className="max-w-2xl rounded-card border border-line bg-surface p-6 shadow-card">
      <p className="text-xs font-semibold tracking-wide text-ink-faint uppercase">{text.status ? `Error ${text.status}` : "Error"}</p>
      <h1 id="error-title" className="mt-1 text-display">
        {text.title}
      </h1>
      <p className="mt-3 text-ink-muted">{text.message}</p>
      {text.status === 403 ? (
        <p className="mt-2 text-sm text-ink-muted">
          Roles are given by an owner or admin{organisationName ? ` of ${organisationName}` : ""}; the members page lists who they are.
        </p>
      ) : null}
      {text.stack ? <pre className="mt-6 overflow-x-auto rounded-control bg-surface-sunken p-4 text-xs">{text.stack}</pre> : null}
      <div className="mt-6 flex flex-wrap gap-2">
        <Link to={home.to} className={buttonClasses("primary")}>
          {home.label}
        </Link>
        <button type="button" className={buttonClasses("secondary")} onClick={() => window.history.back()}>
          Go back
        </button>
      </div>
    </section>
  );
}

/**
 * The error boundary of a page in an organisation: the page's loader or action refused, and the
 * organisation's frame (rendered by its layout) stays around the message. Each such page
 * exports it as its `ErrorBoundary`, since the layout's own boundary would replace the frame.
 */
export function PageErrorBoundary() {
  const error = useRouteError();
  const { organisation = "" } = useParams();
  return <ErrorPanel error={error} home={{ to: `/o/${organisation}/devices`, label: "Back to devices" }} />;
}

/** An error on a page of its own, for when there is no frame to keep (signed out, no such organisation). */
export function StandaloneError({ error }: { error: unknown }) {
  const text = errorTextOf(error);
  return (
    <main className="mx-auto flex min-h-screen max-w-xl flex-col justify-center px-6 py-16">
      <div className="mb-6 flex items-center gap-2 text-harbour">
        <BrandMark className="size-7" />
        <span className="font-semibold">Sallyport</span>
      </div>
      <h1 className="text-display">{text.title}</h1>
      <p className="mt-3 text-ink-muted">{text.message}</p>
      {text.stack ? <pre className="mt-6 overflow-x-auto rounded-control bg-surface-sunken p-4 text-xs">{text.stack}</pre> : null}
      <p className="mt-8">
        <a href="/" className="font-medium text-harbour underline underline-offset-4">
          Back to the start page
        </a>
      </p>
    </main>
  );
}
