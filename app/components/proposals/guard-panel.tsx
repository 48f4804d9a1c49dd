import { Form } from "react-router";
import type { RefusalEffect } from "#server/errors";
import { formatCount, plural, pluralWord } from "#server/engine/format";
import { TextAreaField } from "../device/editor-kit";
import { Button } from "../ui/button";
import { Card } from "../ui/card";
import { GateReasons, type ShownReason } from "./proposal-bits";

/** Form values a refused save carried, except the ones this panel sets itself. */
function carried(values: Record<string, string>): Array<[string, string]> {
  return Object.entries(values).filter(([key]) => key !== "overrideReason");
}

/**
 * A direct save the change policy or the gate (the lockout guard, a failing expectation)
 * refused: why, what the change would have done (its effect in short), and the two ways on —
 * make the change a proposal (its first draft edit), or, for an admin, save it anyway with a
 * written reason (break-glass when changes go through proposals).
 */
export function GuardPanel({
  message,
  reasons,
  values,
  overrideError,
  canOverride,
  breakGlass,
  proposePath,
  minimum,
  effect = null,
}: {
  message: string;
  effect?: RefusalEffect | null;
  reasons: readonly ShownReason[];
  values: Record<string, string>;
  overrideError?: string;
  canOverride: boolean;
  breakGlass: boolean;
  proposePath: string | null;
  minimum: number;
}) {
  return (
    <Card className="mb-6 border-danger/50 p-5" role="alert">
      <h2 className="font-semibold text-danger">Not saved</h2>
      <p className="mt-1 text-sm">{message}</p>
      {reasons.length > 0 ? (
        <div className="mt-3">
          <GateReasons reasons={reasons} />
        </div>
      ) : null}
      {effect ? <RefusedEffect effect={effect} /> : null}
      <div className="mt-4 flex flex-wrap items-start gap-6">
        {proposePath ? (
          <Form method="post" action={proposePath}>
            <input type="hidden" name="intent" value="carry-edit" />
            {carried(values)
              .filter(([key]) => key !== "baseRevision")
              .map(([key, value]) => (
                <input key={key} type="hidden" name={`edit.${key}`} value={value} />
              ))}
            <Button type="submit" variant="secondary">
              Make it a proposal
            </Button>
          </Form>
        ) : null}
        {canOverride ? (
          <Form method="post" className="min-w-64 flex-1 space-y-3" aria-label={breakGlass ? "Break-glass save" : "Save anyway"}>
            {carried(values).map(([key, value]) => (
              <input key={key} type="hidden" name={key} value={value} />
            ))}
            <TextAreaField
              label={breakGlass ? "Why this cannot wait for a proposal (break-glass)" : "Why save it anyway"}
              name="overrideReason"
              rows={2}
              defaultValue={values.overrideReason}
              error={overrideError}
              hint={`At least ${minimum} characters; recorded in the audit log${breakGlass ? ", and the reviewers are e-mailed" : ""}.`}
            />
            <Button type="submit" variant="danger">
              {breakGlass ? "Save directly (break-glass)" : "Save anyway"}
            </Button>
          </Form>
        ) : null}
      </div>
    </Card>
  );
}

/** What the refused save would have done: the headline, the sources that gain and lose, findings, and the rules it touched. */
function RefusedEffect({ effect }: { effect: RefusalEffect }) {
  return (
    <div className="mt-4 rounded-control border border-line bg-surface-sunken p-3 text-sm" data-testid="refused-effect">
      <h3 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">The effect of this change</h3>
      <p className="mt-1 font-medium">{effect.headline}</p>
      <p className="mt-1 text-ink-muted">
        {formatCount(effect.gains).text} {pluralWord(BigInt(effect.gains), { one: "source gains", other: "sources gain" })}, {formatCount(effect.loses).text} {pluralWord(BigInt(effect.loses), { one: "source loses", other: "sources lose" })} on at least one interface, service or time;{" "}
        {plural(effect.findingsNew, { one: "new finding", other: "new findings" })}, {plural(effect.findingsResolved, { one: "finding", other: "findings" })} resolved.
      </p>
      {effect.rules.length > 0 ? (
        <ul className="mt-1 list-disc pl-5 text-ink-muted">
          {effect.rules.slice(0, 8).map((line) => (
            <li key={line}>{line}</li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}
