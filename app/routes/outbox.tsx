import { data, redirect } from "react-router";
import type { Route } from "./+types/outbox";
import { getEnvironment, isOutboxEnabled } from "#server/config.server";
import { listOutboxMessages } from "#server/mail/outbox.server";
import { hasOutboxCookie, isOutboxKey, outboxCookieHeader } from "#server/mail/outbox-access.server";
import { BrandMark } from "#app/components/brand";
import { Card } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { Time } from "#app/components/ui/time";

export const meta: Route.MetaFunction = () => [{ title: "Local outbox · Sallyport" }];

// Only while the local fake SMTP server catches the mail (npm start / npm test), the server
// listens on loopback, and only for whoever holds the secret `npm start` printed
// (server/mail/outbox-access.server.ts, docs/decisions/013); otherwise this page does not exist.
export async function loader({ request }: Route.LoaderArgs) {
  const directory = getEnvironment().MAIL_OUTBOX_DIR;
  if (!isOutboxEnabled() || !directory) throw data({ message: "The local outbox is only available when Sallyport runs with its fake SMTP server." }, { status: 404 });
  const key = new URL(request.url).searchParams.get("key");
  // The secret is swapped for a cookie at once, so it leaves the address bar and the history.
  if (key !== null && isOutboxKey(key)) throw redirect("/outbox", { headers: { "Set-Cookie": outboxCookieHeader(), "Cache-Control": "no-store" } });
  if (!hasOutboxCookie(request)) throw data({ message: "The local outbox opens only with the link `npm start` printed (it carries the outbox's secret)." }, { status: 404 });
  return data({ messages: await listOutboxMessages(directory) }, { headers: { "Cache-Control": "no-store" } });
}

function Linkified({ text }: { text: string }) {
  const parts = text.split(/(https?:\/\/[^\s<>"]+)/g);
  return (
    <>
      {parts.map((part, index) =>
        /^https?:\/\//.test(part) ? (
          <a key={index} href={part} className="break-all text-harbour underline underline-offset-2">
            {part}
          </a>
        ) : (
          <span key={index}>{part}</span>
        ),
      )}
    </>
  );
}

export default function Outbox({ loaderData }: Route.ComponentProps) {
  return (
    <main className="mx-auto max-w-3xl px-6 py-10">
      <a href="/" className="flex items-center gap-2 text-harbour">
        <BrandMark className="size-7" />
        <span className="font-semibold">Sallyport</span>
      </a>
      <h1 className="mt-6 text-display">Local outbox</h1>
      <p className="mt-2 text-sm text-ink-muted">E-mail caught by the local fake SMTP server, newest first. Nothing here left this machine. For local development and demos only.</p>
      <div className="mt-8 space-y-4">
        {loaderData.messages.length === 0 ? (
          <EmptyState title="No messages yet">Password resets and invitations sent while running locally appear here.</EmptyState>
        ) : (
          loaderData.messages.map((message) => (
            <Card key={message.id} className="p-5">
              <article aria-label={message.subject}>
                <div className="flex flex-wrap items-baseline justify-between gap-2">
                  <h2 className="font-semibold">{message.subject}</h2>
                  <Time at={message.date} className="text-xs text-ink-faint tabular" />
                </div>
                <p className="mt-1 text-sm text-ink-muted">To: {message.to}</p>
                <pre className="mt-4 font-sans text-sm whitespace-pre-wrap">
                  <Linkified text={message.text} />
                </pre>
              </article>
            </Card>
          ))
        )}
      </div>
    </main>
  );
}

export function headers({ loaderHeaders }: Route.HeadersArgs) {
  return loaderHeaders;
}
