import type { ReactNode } from "react";
import type { Evidence, ProbeView, RevealedLayer } from "#server/training/lessons";
import { OUTCOME_LABELS, type Layer, type Outcome } from "#server/engine/vocabulary";
import { LAYER_TITLES, DECIDED_WORDS, decidesText, outcomeSentence, VERDICT_CHOICES } from "#app/utils/trace-words";
import { OUTCOME_TONES, OutcomeChip } from "#app/components/outcome";
import { MarkdownText } from "#app/components/markdown";
import { DoorIcon } from "./door-icon";
import { cx } from "#app/components/ui/cx";
import { ScrollArea } from "#app/components/ui/scroll-area";
import { formatInstant } from "#server/engine/format";

// A lesson's probe as a trainee (or a room, in presenter mode) sees it: the layers reached so
// far, each with the model elements it looks at, its verdict, the engine's words and the
// trainer's note — and the layer reached but not yet revealed. Only what lessons.ts hands over
// is drawn: later layers are not in the data at all.

export type Size = "page" | "projector";

const list = (items: readonly string[], empty = "none") => (items.length ? items.join(", ") : empty);

/** The model elements a layer looks at. */
export function EvidenceView({ evidence, size = "page" }: { evidence: Evidence; size?: Size }) {
  const small = size === "page" ? "text-xs" : "text-lg";
  switch (evidence.kind) {
    case "arrival":
      return (
        <p className={small}>
          Interface <span className="font-mono font-semibold">{evidence.interface}</span> ({evidence.role}): <span className="font-mono break-all">{list(evidence.addresses, "no addresses")}</span>. {`The probe comes from an IPv${evidence.family} address.`}
        </p>
      );
    case "inbound-rules":
      return (
        <div>
          <ScrollArea>
            <table className={cx("w-full text-left", small)} aria-label="The rules, in order">
              <thead className="text-ink-muted">
                <tr>
                  <th className="pr-2 font-medium">#</th>
                  <th className="pr-2 font-medium">Rule</th>
                  <th className="pr-2 font-medium">Interface</th>
                  <th className="pr-2 font-medium">From</th>
                  <th className="pr-2 font-medium">To</th>
                  <th className="pr-2 font-medium">Services</th>
                  <th className="pr-2 font-medium">When</th>
                  <th className="font-medium">Action</th>
                </tr>
              </thead>
              <tbody className="font-mono">
                {evidence.rules.map((rule) => (
                  <tr key={rule.id} className={cx("border-t border-line align-top", !rule.enabled && "text-ink-faint line-through")}>
                    <td className="pr-2">{rule.position}</td>
                    <td className="pr-2 break-all">{rule.id}</td>
                    <td className="pr-2">{rule.interface}</td>
                    <td className="pr-2 break-all">{list(rule.sources)}</td>
                    <td className="pr-2 break-all">{list(rule.destinations)}</td>
                    <td className="pr-2">{list(rule.services)}</td>
                    <td className="pr-2">{rule.schedule}</td>
                    <td>{rule.action}</td>
                  </tr>
                ))}
                {evidence.rules.length === 0 ? (
                  <tr>
                    <td colSpan={8} className="font-sans text-ink-muted">
                      No rules.
                    </td>
                  </tr>
                ) : null}
              </tbody>
            </table>
          </ScrollArea>
          <p className={cx("mt-1 text-ink-muted", small)}>
            Read top to bottom, first match wins; no match → the device default, <span className="font-mono">{evidence.defaultInbound}</span>. Times are in {evidence.timezone}.
          </p>
        </div>
      );
    case "listener":
      return (
        <p className={small}>
          Listening on <span className="font-mono font-semibold">{evidence.interface}</span>: <span className="font-mono">{list(evidence.listeners, "nothing")}</span>. A port nobody listens on is answered with <span className="font-mono">{evidence.unlistenedPort}</span>.
        </p>
      );
    case "service-kind":
      return (
        <p className={small}>
          <span className="font-mono font-semibold">{evidence.service}</span> ({evidence.protocol}
          {evidence.port !== null ? `/${evidence.port}` : " echo"}) is of kind <span className="font-mono">{evidence.serviceKind}</span>.
        </p>
      );
    case "login-sources":
      return (
        <ul className={cx("space-y-0.5 font-mono", small)}>
          {evidence.account ? <li className="font-sans text-ink-muted">The probe asks about account {evidence.account} only.</li> : null}
          {evidence.accounts.map((account) => (
            <li key={account.name} className={cx(!account.enabled && "text-ink-faint line-through")}>
              {account.name}: from {list(account.loginSources, "anywhere")}
              {account.services.length ? ` · on ${account.services.join(", ")}` : ""}
            </li>
          ))}
          {evidence.accounts.length === 0 ? <li className="font-sans text-ink-muted">No accounts.</li> : null}
        </ul>
      );
    case "second-factor":
      return (
        <ul className={cx("space-y-0.5 font-mono", small)}>
          {evidence.accounts.map((account) => (
            <li key={account.name}>
              {account.name}: {account.secondFactor === "totp" ? "TOTP" : "password only"}
            </li>
          ))}
        </ul>
      );
  }
}

/** A revealed layer's verdict: "passes", or what it decided in the outcome's own colour (never "blocked" red when the door opened). */
export function VerdictBadge({ result, outcome, size = "page" }: { result: "pass" | "stop"; outcome: Outcome | null; size?: Size }) {
  const text = size === "page" ? "text-xs" : "text-xl";
  if (result === "pass" || !outcome) return <span className={cx("w-fit rounded border border-line-strong bg-surface-sunken px-1.5 py-0.5 font-semibold text-ink-muted", text)}>passes</span>;
  return (
    <span className={cx("inline-flex w-fit items-center gap-1 rounded border px-1.5 py-0.5 font-semibold", OUTCOME_TONES[outcome], text)}>
      <DoorIcon outcome={outcome} className={size === "page" ? "size-3" : "size-5"} />
      {decidesText(outcome)}
    </span>
  );
}

function predictionWords(entry: RevealedLayer, outcome: Outcome | null): ReactNode {
  const graded = entry.graded;
  if (!graded) return null;
  const said = graded.predicted.verdict === "pass" ? "it passes" : `it decides${graded.predicted.outcome ? ` (${DECIDED_WORDS[graded.predicted.outcome]})` : ""}`;
  const right = graded.points === graded.possible;
  return (
    <p className={cx("text-sm font-medium", right ? "text-success" : "text-danger")}>
      {right ? "✓ Right" : "✗ Not quite"}: you said {said}
      {graded.outcomeCorrect === false && graded.verdictCorrect && outcome ? ` — the outcome is ${OUTCOME_LABELS[outcome].toLowerCase()}` : ""}. {graded.points} of {graded.possible}.
    </p>
  );
}

/** The layers reached so far, and the next one reached when `question` is drawn by the caller. */
export function RevealedLayers({ view, size = "page", children }: { view: ProbeView; size?: Size; children?: ReactNode }) {
  const decided = view.outcome?.outcome ?? null;
  const title = size === "page" ? "text-sm" : "text-3xl";
  return (
    <ol className="space-y-3" aria-label="Layers reached">
      {view.revealed.map((entry, index) => {
        const deciding = entry.result === "stop";
        return (
          <li key={entry.layer} id={`layer-${index}`} className={cx("rounded-card border bg-surface p-4", deciding && decided ? OUTCOME_TONES[decided].split(" ").filter((tone) => tone.startsWith("border")).join(" ") : "border-line")}>
            <div className="flex flex-wrap items-center gap-3">
              <h3 className={cx("font-semibold", title)}>{`${index + 1}. ${LAYER_TITLES[entry.layer]}`}</h3>
              <VerdictBadge result={entry.result} outcome={deciding ? decided : null} size={size} />
            </div>
            <div className="mt-2">
              <EvidenceView evidence={entry.evidence} size={size} />
            </div>
            <p className={cx("mt-2 text-ink-muted", size === "page" ? "text-sm" : "text-2xl")}>{entry.detail}.</p>
            {entry.note ? (
              <div className={cx("mt-2 border-l-4 border-brass pl-3", size === "page" ? "text-sm" : "text-2xl")}>
                <p className="sr-only">Trainer's note:</p>
                <MarkdownText>{entry.note}</MarkdownText>
              </div>
            ) : null}
            {size === "page" ? predictionWords(entry, deciding ? decided : null) : null}
          </li>
        );
      })}
      {children}
    </ol>
  );
}

/** The outcome of a probe, once its deciding layer is revealed. */
export function ProbeOutcome({ view, size = "page" }: { view: ProbeView; size?: Size }) {
  if (!view.outcome) return null;
  const { outcome, ruleId, rulePosition, eligibleAccounts, decidedBy } = view.outcome;
  const last = view.revealed[view.revealed.length - 1];
  const sentence = outcomeSentence(
    {
      outcome,
      ruleId,
      eligibleAccounts,
      layers: last ? [{ layer: last.layer, result: last.result, detail: last.detail }] : [],
      interface: view.probe.interface,
      service: view.probe.service,
      from: view.probe.from,
      to: view.to,
    },
    rulePosition ?? undefined,
  );
  return (
    <section aria-label="Outcome" className={cx("rounded-card border-2 p-4", OUTCOME_TONES[outcome])}>
      <div className="flex flex-wrap items-center gap-3">
        <OutcomeChip outcome={outcome} className={size === "projector" ? "text-xl" : undefined} />
        <span className={cx("text-ink-muted", size === "page" ? "text-sm" : "text-xl")}>decided by {LAYER_TITLES[decidedBy as Layer]}</span>
      </div>
      <p className={cx("mt-2 font-medium text-ink", size === "page" ? "" : "text-3xl")}>{sentence}</p>
    </section>
  );
}

/** The probe itself, in words: what a trainee knows before any layer is revealed. */
export function ProbeLine({ view, size = "page" }: { view: ProbeView; size?: Size }) {
  const { probe } = view;
  const value = (text: string) => <span className="font-mono font-semibold break-all">{text}</span>;
  return (
    <p className={size === "page" ? "text-sm" : "text-3xl"}>
      From {value(probe.from)} on interface {value(probe.interface)}, service {value(probe.service)}
      {probe.to ? <>, to {value(probe.to)}</> : null}
      {probe.account ? <>, account {value(probe.account)}</> : null}, at {formatInstant(view.at, view.timezone)}.
    </p>
  );
}

export { VERDICT_CHOICES };
