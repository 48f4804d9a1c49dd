import type { ReactNode } from "react";
import { Form } from "react-router";
import { Button } from "#app/components/ui/button";
import { cx } from "#app/components/ui/cx";

/** A drill's goals, each with whether it holds (on the trainer's answer, or on the trainee's model). */
export function GoalList({ goals, holdsLabel, children }: { goals: Array<{ words: string; holds: boolean | null; note?: string; result?: string }>; holdsLabel: string; children?: (index: number) => ReactNode }) {
  if (goals.length === 0) return <p className="mt-2 text-sm text-ink-muted">No goals yet.</p>;
  return (
    <ol className="mt-3 space-y-2" aria-label="Goals">
      {goals.map((goal, index) => (
        <li key={index} className="flex flex-wrap items-start gap-x-3 gap-y-1 rounded-control border border-line p-3 text-sm">
          <span className="font-medium">{index + 1}.</span>
          <span className="min-w-0 flex-1 break-words font-mono text-xs sm:text-sm">{goal.words}</span>
          {goal.holds === null ? null : (
            <span className={cx("rounded-full border px-2 text-xs font-medium", goal.holds ? "border-success text-success" : "border-danger text-danger")}>{`${goal.holds ? "holds" : "does not hold"} ${holdsLabel}`}</span>
          )}
          {goal.note ? <span className="w-full text-xs text-ink-muted">{goal.note}</span> : null}
          {goal.result ? <span className="w-full text-xs text-ink-muted">{goal.result}</span> : null}
          {children ? children(index) : null}
        </li>
      ))}
    </ol>
  );
}

/**
 * An inbound rule list reordered one place at a time: "Move up" / "Move down" are ordinary form
 * buttons, so keyboard and screen reader users (and pages without script) reorder alike.
 */
export function RuleOrderList({ rules, intent, version, disabled, label }: { rules: Array<{ id: string; words: string }>; intent: string; version?: number; disabled?: boolean; label: string }) {
  return (
    <ol className="mt-3 space-y-2" aria-label={label}>
      {rules.map((rule, index) => (
        <li key={rule.id} id={`rule-${rule.id}`} className="flex flex-wrap items-center gap-x-3 gap-y-2 rounded-control border border-line p-3 text-sm">
          <span className="tabular w-6 font-medium">{index + 1}.</span>
          <span className="min-w-0 flex-1 break-words">
            <span className="font-mono font-medium">{rule.id}</span> <span className="text-ink-muted">{rule.words}</span>
          </span>
          <span className="flex gap-2">
            {(["up", "down"] as const).map((direction) => (
              <Form key={direction} method="post" preventScrollReset>
                <input type="hidden" name="intent" value={intent} />
                {version === undefined ? null : <input type="hidden" name="version" value={version} />}
                <input type="hidden" name="ruleId" value={rule.id} />
                <input type="hidden" name="direction" value={direction} />
                <Button type="submit" size="sm" variant="secondary" disabled={disabled || (direction === "up" ? index === 0 : index === rules.length - 1)} aria-label={`Move ${rule.id} ${direction}`}>
                  {direction === "up" ? "Move up" : "Move down"}
                </Button>
              </Form>
            ))}
          </span>
        </li>
      ))}
    </ol>
  );
}
