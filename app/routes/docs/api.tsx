import { Fragment, type ReactNode } from "react";
import { Link } from "react-router";
import type { Route } from "./+types/api";
import { signedInOf } from "#server/auth/guard.server";
import { apiReference, type ReferenceField, type ReferenceOperation } from "#server/api/reference";
import { apiV1Document } from "#server/api/v1/index";
import { getEnvironment } from "#server/config.server";
import { BrandHomeLink } from "#app/components/brand";
import { Badge, Card } from "#app/components/ui/card";
import { Table, Td, Th } from "#app/components/ui/table";
import { cx } from "#app/components/ui/cx";
import { ScrollArea } from "#app/components/ui/scroll-area";

export const meta: Route.MetaFunction = () => [{ title: "API reference · Sallyport" }];

// The REST API's reference, drawn from its OpenAPI document (the same one /api/v1/openapi.json
// serves), so it says exactly what the routes accept and answer. Public, like the document.
export async function loader({ context }: Route.LoaderArgs) {
  const signedIn = signedInOf(context);
  return {
    reference: apiReference(apiV1Document()),
    // The example's base URL: the configured origin, never one built from the request's Host.
    origin: getEnvironment().APP_ORIGIN?.replace(/\/+$/, "") ?? null,
    signedIn: signedIn !== null,
  };
}

/** Text with `code` spans and **strong** words, as the document's descriptions write them. */
function Prose({ text, className }: { text: string; className?: string }) {
  const parts = text.split(/(`[^`]+`|\*\*[^*]+\*\*)/g);
  return (
    <p className={className}>
      {parts.map((part, index) =>
        part.startsWith("`") && part.endsWith("`") ? (
          <code key={index} className="rounded bg-surface-sunken px-1 font-mono text-[0.85em]">
            {part.slice(1, -1)}
          </code>
        ) : part.startsWith("**") && part.endsWith("**") ? (
          <strong key={index}>{part.slice(2, -2)}</strong>
        ) : (
          <Fragment key={index}>{part}</Fragment>
        ),
      )}
    </p>
  );
}

function Code({ children }: { children: ReactNode }) {
  return <code className="rounded bg-surface-sunken px-1 font-mono text-[0.85em]">{children}</code>;
}

/** A shell example; on a phone it scrolls sideways inside itself, reachable by keyboard (ScrollArea). */
function Block({ caption, children }: { caption: string; children: string }) {
  return (
    <ScrollArea className="rounded-control border border-line bg-surface-sunken">
      <figure>
        <figcaption className="sr-only">{caption}</figcaption>
        <pre className="p-3 font-mono text-xs leading-relaxed text-ink">{children}</pre>
      </figure>
    </ScrollArea>
  );
}

const METHOD_TONES: Record<string, string> = {
  GET: "bg-harbour-soft text-harbour border-harbour/30",
  POST: "bg-brass-soft text-brass border-brass/30",
};

function Method({ method }: { method: string }) {
  return <span className={cx("inline-flex w-14 justify-center rounded-control border px-1.5 py-0.5 font-mono text-xs font-semibold", METHOD_TONES[method] ?? "border-line")}>{method}</span>;
}

function TypeText({ type, schemaRef }: { type: string; schemaRef: string | null }) {
  if (!schemaRef) return <span className="font-mono text-xs">{type}</span>;
  const [before, after] = type.split(schemaRef);
  return (
    <span className="font-mono text-xs">
      {before}
      <a href={`#schema-${schemaRef.toLowerCase().replace(/[^a-z0-9]+/g, "-")}`} className="text-harbour underline-offset-2 hover:underline">
        {schemaRef}
      </a>
      {after}
    </span>
  );
}

function FieldTable({ fields, caption, withPlace = false }: { fields: ReadonlyArray<ReferenceField & { in?: string }>; caption: string; withPlace?: boolean }) {
  if (fields.length === 0) return null;
  return (
    <Table>
      <caption className="sr-only">{caption}</caption>
      <thead>
        <tr>
          <Th>Name</Th>
          {withPlace ? <Th>In</Th> : null}
          <Th>Type</Th>
          <Th>Meaning</Th>
        </tr>
      </thead>
      <tbody>
        {fields.map((field) => (
          <tr key={`${field.in ?? ""}${field.name}`}>
            <Td className="align-top">
              <span className="font-mono text-xs whitespace-nowrap">{field.name}</span>
              {field.required ? <span className="block text-xs text-ink-faint">required</span> : null}
            </Td>
            {withPlace ? <Td className="align-top text-xs text-ink-muted">{field.in}</Td> : null}
            <Td className="align-top max-sm:min-w-40!">
              <TypeText type={field.type} schemaRef={field.ref} />
            </Td>
            <Td className="align-top text-sm text-ink-muted max-sm:min-w-56!">{field.description ? <Prose text={field.description} /> : "—"}</Td>
          </tr>
        ))}
      </tbody>
    </Table>
  );
}

function Operation({ operation }: { operation: ReferenceOperation }) {
  return (
    <Card className="scroll-mt-6 space-y-4 p-5" id={operation.anchor}>
      <div>
        <h3 className="flex flex-wrap items-center gap-2 text-base font-semibold">
          <Method method={operation.method} />
          <span className="font-mono text-sm break-all">{operation.path}</span>
        </h3>
        <p className="mt-1 font-medium text-ink">{operation.summary}</p>
      </div>
      {/* The document's last paragraph says what the badges below say. */}
      {operation.description
        .split("\n\n")
        .filter((paragraph) => !paragraph.startsWith("Needs "))
        .map((paragraph, index) => (
          <Prose key={index} text={paragraph} className="max-w-3xl text-sm text-ink-muted" />
        ))}
      {operation.role ? (
        <p className="flex flex-wrap gap-2 text-xs">
          <Badge tone={operation.scope === "write" ? "brass" : "harbour"}>{operation.scope === "write" ? "write scope" : "read scope"}</Badge>
          <Badge>{operation.role} or higher</Badge>
        </p>
      ) : (
        <p className="text-xs">
          <Badge>no token needed</Badge>
        </p>
      )}
      {operation.parameters.length > 0 ? (
        <section className="space-y-2">
          <h4 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Parameters</h4>
          <FieldTable fields={operation.parameters} caption={`Parameters of ${operation.method} ${operation.path}`} withPlace />
        </section>
      ) : null}
      {operation.body ? (
        <section className="space-y-2">
          <h4 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Body (JSON{operation.body.schema ? `: ${operation.body.schema}` : ""})</h4>
          <FieldTable fields={operation.body.fields} caption={`Body of ${operation.method} ${operation.path}`} />
        </section>
      ) : null}
      <section className="space-y-2">
        <h4 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Answers</h4>
        <ul className="space-y-1 text-sm">
          {operation.responses.map((response) => (
            <li key={response.status} className="flex flex-wrap items-baseline gap-x-2">
              <span className={cx("font-mono text-xs font-semibold", response.status.startsWith("2") ? "text-success" : response.status.startsWith("3") ? "text-ink-muted" : "text-danger")}>{response.status}</span>
              <span>{response.description}</span>
              {response.schema ? (
                <span className="text-ink-muted">
                  — {response.mediaType === "application/problem+json" ? <a href="#errors" className="text-harbour underline-offset-2 hover:underline">problem details</a> : <TypeText type={response.schema} schemaRef={response.schemaRef} />}
                </span>
              ) : null}
            </li>
          ))}
        </ul>
      </section>
    </Card>
  );
}

function Contents({ groups }: { groups: Route.ComponentProps["loaderData"]["reference"]["groups"] }) {
  return (
    <ul className="mt-2 space-y-1 lg:mt-0">
      <li>
        <a href="#start" className="text-ink-muted hover:text-ink">
          Getting started
        </a>
      </li>
      <li>
        <a href="#errors" className="text-ink-muted hover:text-ink">
          Errors
        </a>
      </li>
      {groups.map((group) => (
        <li key={group.tag}>
          <a href={`#tag-${group.tag.toLowerCase()}`} className="font-medium text-ink hover:text-harbour">
            {group.tag}
          </a>
          <ul className="mt-1 mb-2 space-y-0.5 border-l border-line pl-3">
            {group.operations.map((operation) => (
              <li key={operation.anchor}>
                <a href={`#${operation.anchor}`} className="text-ink-muted hover:text-ink">
                  {operation.summary}
                </a>
              </li>
            ))}
          </ul>
        </li>
      ))}
      <li>
        <a href="#schemas" className="text-ink-muted hover:text-ink">
          Schemas
        </a>
      </li>
    </ul>
  );
}

export default function ApiReferencePage({ loaderData }: Route.ComponentProps) {
  const { reference, origin, signedIn } = loaderData;
  const base = `${origin ?? "$SALLYPORT_URL"}${reference.basePath}`;
  return (
    <main className="mx-auto max-w-6xl px-4 py-8 sm:px-6 sm:py-10">
      <div className="mb-8 flex flex-wrap items-center justify-between gap-3">
        <BrandHomeLink />
        <nav aria-label="API reference links" className="flex flex-wrap gap-4 text-sm">
          <a href={`${reference.basePath}/openapi.json`} className="text-harbour underline-offset-2 hover:underline">
            OpenAPI document (JSON)
          </a>
          {signedIn ? (
            <Link to="/account#api-tokens" className="text-harbour underline-offset-2 hover:underline">
              Your API tokens
            </Link>
          ) : null}
        </nav>
      </div>
      <div className="grid gap-8 lg:grid-cols-[14rem_minmax(0,1fr)]">
        <nav aria-label="Contents" className="text-sm lg:sticky lg:top-6 lg:max-h-[calc(100vh-3rem)] lg:self-start lg:overflow-y-auto">
          {/* Folded on a phone, so the reference starts on the first screen; always open beside it on a wide one. */}
          <details className="rounded-card border border-line bg-surface p-3 lg:hidden">
            <summary className="cursor-pointer font-semibold">Contents</summary>
            <Contents groups={reference.groups} />
          </details>
          <div className="hidden lg:block">
            <Contents groups={reference.groups} />
          </div>
        </nav>

        <div className="min-w-0 space-y-10">
          <header id="start" className="scroll-mt-6 space-y-4">
            <h1 className="text-display text-ink">
              {reference.title} <span className="text-ink-faint">v{reference.version}</span>
            </h1>
            <Prose text={reference.description} className="max-w-3xl text-sm text-ink-muted" />
            <Card className="space-y-3 p-5 text-sm">
              <h2 className="font-semibold">Getting started</h2>
              <p className="text-ink-muted">
                Every path below starts with <Code>{reference.basePath}</Code> on your Sallyport server. Make a personal token on your account page (it acts with your role in the
                organisation you choose), or ask an admin for a service token (organisation settings → API tokens). Send it in the Authorization header:
              </p>
              <Block caption="Listing devices with curl">{`export SALLYPORT_URL=https://sallyport.example.net   # your server
export SALLYPORT_TOKEN=sallyport_p_…                  # shown once when you made it
curl -H "Authorization: Bearer $SALLYPORT_TOKEN" "${base}/devices?limit=10"`}</Block>
              <ul className="list-disc space-y-1 pl-5 text-ink-muted">
                <li>
                  <strong className="text-ink">Scopes and roles.</strong> A read token calls the reading endpoints; anything that changes something needs the write scope (403
                  otherwise). Each endpoint also names the least role it needs.
                </li>
                <li>
                  <strong className="text-ink">Lists</strong> come a page at a time: pass <Code>limit</Code>, then the answer&apos;s <Code>nextCursor</Code> as <Code>cursor</Code> until
                  it is null. The Link header names the next page too.
                </li>
                <li>
                  <strong className="text-ink">Revisions never change</strong>: their answers carry an ETag; send it back as If-None-Match and an unchanged one is a 304 without a body.
                </li>
                <li>
                  <strong className="text-ink">Rate limit.</strong> Each token has its calls per minute (RateLimit-Limit, RateLimit-Remaining, RateLimit-Reset on every answer); past it the
                  answer is 429 with Retry-After.
                </li>
                <li>
                  <strong className="text-ink">Audit.</strong> Every call is in the organisation&apos;s audit log under the token&apos;s name.
                </li>
                <li>
                  <strong className="text-ink">Browsers.</strong> Calls from another site&apos;s pages (CORS) are off unless your administrator lists that site&apos;s origin.
                </li>
              </ul>
            </Card>
          </header>

          <section id="errors" className="scroll-mt-6 space-y-3">
            <h2 className="text-lg font-semibold">Errors</h2>
            <p className="max-w-3xl text-sm text-ink-muted">
              Every error is a problem details object (RFC 9457) sent as <Code>application/problem+json</Code>: <Code>type</Code> points at its entry below, <Code>title</Code> names the
              kind, <Code>detail</Code> says what happened this time, and <Code>issues</Code> lists each bad input with its path.
            </p>
            <Table>
              <caption className="sr-only">Problem types</caption>
              <thead>
                <tr>
                  <Th>Status</Th>
                  <Th>Type</Th>
                  <Th>When</Th>
                </tr>
              </thead>
              <tbody>
                {reference.problems.map((problem) => (
                  <tr key={problem.code} id={problem.anchor} className="scroll-mt-6">
                    <Td className="align-top font-mono text-xs">{problem.status}</Td>
                    <Td className="align-top">
                      <span className="font-medium">{problem.title}</span>
                      <span className="block font-mono text-xs text-ink-faint">{problem.code}</span>
                    </Td>
                    <Td className="align-top text-sm text-ink-muted max-sm:min-w-56!">
                      <Prose text={problem.explains} />
                    </Td>
                  </tr>
                ))}
              </tbody>
            </Table>
          </section>

          {reference.groups.map((group) => (
            <section key={group.tag} id={`tag-${group.tag.toLowerCase()}`} className="scroll-mt-6 space-y-4">
              <div>
                <h2 className="text-lg font-semibold">{group.tag}</h2>
                {group.description ? <p className="text-sm text-ink-muted">{group.description}</p> : null}
              </div>
              {group.operations.map((operation) => (
                <Operation key={operation.anchor} operation={operation} />
              ))}
            </section>
          ))}

          <section id="schemas" className="scroll-mt-6 space-y-4">
            <h2 className="text-lg font-semibold">Schemas</h2>
            {reference.schemas.map((schema) => (
              <Card key={schema.name} id={schema.anchor} className="scroll-mt-6 space-y-3 p-5">
                <h3 className="font-mono text-sm font-semibold">{schema.name}</h3>
                {schema.description ? <Prose text={schema.description} className="text-sm text-ink-muted" /> : null}
                <FieldTable fields={schema.fields} caption={`Fields of ${schema.name}`} />
              </Card>
            ))}
          </section>
        </div>
      </div>
    </main>
  );
}
