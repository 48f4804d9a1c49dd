// The drill kinds in the product's own words (docs/decisions/016, "Drills"). Pure.
import type { DrillKind } from "#models/training-kinds";

export const DRILL_KIND_LABELS: Record<DrillKind, string> = {
  predict: "Call the outcome",
  spot: "Find the cause",
  fix: "Repair the model",
  order: "Put the rules in order",
};

export const DRILL_KIND_HINTS: Record<DrillKind, string> = {
  predict: "Generated probes on the scenario, balanced across the outcomes it can give: the trainee names each outcome and the layer that decides it.",
  spot: "A finding of the scenario: the trainee picks, in the model, the element that causes it.",
  fix: "Goals (probe → outcome) the scenario misses: the trainee edits a sandbox copy until every goal holds; the difference from your answer model is shown.",
  order: "The scenario's inbound rules: the trainee reorders them so every goal holds with as few exposed addresses as your order.",
};
