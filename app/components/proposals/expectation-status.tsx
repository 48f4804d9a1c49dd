import type { ExpectationResult } from "#server/engine/index";
import { Badge } from "../ui/card";

/** An expectation's result on one revision, in a word and a tone (the Expectations tab, a proposal's effect, its change record). */
export const EXPECTATION_STATUS: Record<ExpectationResult["status"], { label: string; tone: "success" | "danger" | "neutral" }> = {
  holds: { label: "Holds", tone: "success" },
  fails: { label: "Fails", tone: "danger" },
  unknown: { label: "Cannot be checked", tone: "neutral" },
};

export function ExpectationStatusBadge({ status }: { status: ExpectationResult["status"] }) {
  const shown = EXPECTATION_STATUS[status];
  return <Badge tone={shown.tone}>{shown.label}</Badge>;
}
