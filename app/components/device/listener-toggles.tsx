// An interface's listeners as a set of switches grouped by service kind: the kind is the
// heading (what answering means on this kind), each service shows its port and a short note,
// and cleartext services are marked. The switches post `listeners` like plain checkboxes.
import { useId } from "react";
import type { ServiceKind } from "#server/engine/vocabulary";
import { groupByKind } from "#server/analysis/catalogue";
import { cx } from "../ui/cx";

export type ListedService = { name: string; kind: ServiceKind; protocol: string; port: number | null; builtin: boolean };

/** What a listening service of each kind does for whoever reaches it (PRODUCT.md §3, layer 4). */
export const SERVICE_KIND_WORDS: Record<ServiceKind, { heading: string; note: string }> = {
  login: { heading: "Login", note: "shows a login page or banner" },
  other: { heading: "Other", note: "answers without a login" },
  echo: { heading: "Echo", note: "answers ping" },
};

/**
 * A short note per built-in service. http and telnet carry passwords in clear text (the
 * cleartext-listener finding); any answer, ping's included, reveals the device.
 */
const BUILTIN_NOTES: Readonly<Record<string, { text: string; caution: boolean }>> = {
  ssh: { text: "encrypted", caution: false },
  https: { text: "encrypted", caution: false },
  http: { text: "cleartext", caution: true },
  telnet: { text: "cleartext", caution: true },
  snmp: { text: "no login; answers queries", caution: false },
  ping: { text: "any reply reveals the device", caution: false },
};

export function serviceNote(service: ListedService): { text: string; caution: boolean } {
  return (service.builtin ? BUILTIN_NOTES[service.name] : undefined) ?? { text: "custom service", caution: false };
}

export function portText(service: Pick<ListedService, "protocol" | "port">): string {
  return service.port === null ? `${service.protocol} echo` : `${service.protocol}/${service.port}`;
}

export function ListenerToggles({ services, checked, error, hint, name = "listeners" }: { services: ListedService[]; checked: readonly string[]; error?: string; hint?: string; name?: string }) {
  const id = useId();
  return (
    <fieldset className="space-y-2" aria-describedby={cx(hint && `${id}-hint`, error && `${id}-error`) || undefined}>
      <legend className="text-sm font-medium">Listeners</legend>
      {hint ? (
        <p id={`${id}-hint`} className="text-xs text-ink-muted">
          {hint}
        </p>
      ) : null}
      <div className="space-y-2">
        {groupByKind(services).map((group) => (
          <fieldset key={group.kind} className="rounded-control border border-line bg-surface-sunken/60 px-3 pt-1 pb-2">
            <legend className="px-1 text-xs">
              <span className="font-semibold tracking-wide text-ink uppercase">{SERVICE_KIND_WORDS[group.kind].heading}</span>
              <span className="text-ink-muted"> · {SERVICE_KIND_WORDS[group.kind].note}</span>
            </legend>
            <ul className="divide-y divide-line">
              {group.services.map((service) => (
                <ListenerSwitch key={service.name} service={service} name={name} defaultChecked={checked.includes(service.name)} />
              ))}
            </ul>
          </fieldset>
        ))}
      </div>
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-sm text-danger">
          {error}
        </p>
      ) : null}
    </fieldset>
  );
}

function ListenerSwitch({ service, name, defaultChecked }: { service: ListedService; name: string; defaultChecked: boolean }) {
  const id = useId();
  const note = serviceNote(service);
  return (
    <li>
      <label className="flex min-h-10 cursor-pointer flex-wrap items-center gap-x-3 gap-y-0.5 py-1.5">
        <input
          type="checkbox"
          role="switch"
          name={name}
          value={service.name}
          defaultChecked={defaultChecked}
          aria-labelledby={`${id}-name`}
          aria-describedby={`${id}-note`}
          className={cx(
            "relative h-5 w-9 shrink-0 cursor-pointer appearance-none rounded-full border border-line-strong bg-surface transition-colors",
            "before:absolute before:top-0.5 before:left-0.5 before:size-3.5 before:rounded-full before:bg-ink-faint before:transition-transform before:content-['']",
            "checked:border-harbour checked:bg-harbour checked:before:translate-x-4 checked:before:bg-on-harbour",
            "focus-visible:ring-2 focus-visible:ring-brass/60 focus-visible:outline-none",
            note.caution && "checked:border-warning checked:bg-warning",
          )}
        />
        <span id={`${id}-name`} className="font-mono text-sm font-medium">
          {service.name}
        </span>
        <span id={`${id}-note`} className="ml-auto flex items-center gap-2 text-xs">
          <span className="font-mono text-ink-faint">{portText(service)}</span>
          <span className={note.caution ? "rounded-full border border-warning/50 bg-warning-soft px-1.5 font-medium text-warning" : "text-ink-muted"}>{note.text}</span>
        </span>
      </label>
    </li>
  );
}

/** An interface's listeners for a table cell or a summary line: grouped by kind, each kind named. */
export function ListenersByKind({ listeners, services }: { listeners: readonly string[]; services: ListedService[] }) {
  const on = new Set(listeners);
  const groups = groupByKind(services.filter((service) => on.has(service.name)));
  if (groups.length === 0) return <span className="text-ink-faint">none</span>;
  return (
    <span className="flex flex-wrap gap-x-3 gap-y-0.5">
      {groups.map((group) => (
        <span key={group.kind}>
          <span className="text-ink-faint">{SERVICE_KIND_WORDS[group.kind].heading.toLowerCase()}</span>{" "}
          <span className="font-mono">
            {group.services.map((service, index) => (
              <span key={service.name} className={serviceNote(service).caution ? "text-warning" : undefined}>
                {service.name}
                {index < group.services.length - 1 ? ", " : ""}
              </span>
            ))}
          </span>
        </span>
      ))}
    </span>
  );
}
