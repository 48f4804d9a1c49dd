// What the training forms accept (docs/decisions/016): zod schemas with a message per field.
// Pure, so the routes and the tests share them.
import { z } from "zod";
import { ProbeQuerySchema } from "../analysis/probe.ts";
import { ALL_WEEK, LAYERS, OUTCOMES, ProbeExpectationSchema, type Layer } from "../engine/index.ts";
import { DRILL_KINDS } from "#models/training-kinds.ts";
import { MAX_DRILL_GOALS, MAX_DRILL_PROBES, type DrillGoal } from "./drills.ts";
import { IdSchema } from "../http/schemas.ts";
import { MAX_LESSON_STEPS, MAX_NOTE_LENGTH, type LessonNotes } from "./lessons.ts";

/** Control characters other than tab, line feed and carriage return (C0, DEL, C1). */
// eslint-disable-next-line no-control-regex -- the point is to find them
const CONTROL = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F-\u009F]/;
// eslint-disable-next-line no-control-regex -- the point is to find them
const CONTROL_OR_BREAK = /[\u0000-\u001F\u007F-\u009F]/;

/** One line of text, trimmed, with no control characters. */
export function lineText(label: string, max: number, min = 1) {
  return z
    .string({ message: `Enter ${label}.` })
    .trim()
    .min(min, `Enter ${label}.`)
    .max(max, `Use at most ${max} characters.`)
    .refine((text) => !CONTROL_OR_BREAK.test(text), "Remove the control characters (tabs and line breaks too) from this field.");
}

/** Several lines (Markdown), no control characters but tab and line breaks. */
export function paragraphText(max: number) {
  return z
    .string()
    .default("")
    .transform((text) => text.replace(/\r\n?/g, "\n").trim())
    .pipe(z.string().max(max, `Use at most ${max} characters.`).refine((text) => !CONTROL.test(text), "Remove the control characters from this text."));
}

export const ScenarioDetailsSchema = z.object({
  title: lineText("a title", 100),
  summary: paragraphText(2000),
});

const CHECKBOX = z
  .string()
  .optional()
  .transform((value) => value === "on" || value === "true");

/** Where a new scenario's model comes from: nothing, a shipped example, or a fleet device (optionally anonymised). */
export const ScenarioSourceSchema = z.discriminatedUnion(
  "source",
  [
    z.object({ source: z.literal("blank") }),
    z.object({ source: z.literal("example"), example: z.string({ message: "Choose an example." }).trim().min(1, "Choose an example.").max(63) }),
    z.object({ source: z.literal("copy"), deviceId: IdSchema, anonymise: CHECKBOX }),
  ],
  { message: "Choose where the model comes from." },
);

export const LessonDetailsSchema = z.object({
  title: lineText("a title", 100),
  introduction: paragraphText(4000),
});

export const NewLessonSchema = LessonDetailsSchema.extend({
  scenarioId: z.string({ message: "Choose a scenario." }).uuid("Choose a scenario."),
  withExampleProbes: CHECKBOX,
});

export const VersionSchema = z.coerce.number({ message: "Reload the page: the form lost its version." }).int().min(1);

/** The form field of a layer's note in the lesson editor. */
export const noteField = (layer: Layer) => `note-${layer}`;

const NoteSchema = paragraphText(MAX_NOTE_LENGTH);

/** A lesson step's form: the probe's fields, and a note per layer (`note-arrival`, …). */
export const StepFormSchema = z.record(z.string(), z.string()).transform((values, context) => {
  const probe = ProbeQuerySchema.safeParse(values);
  if (!probe.success) {
    for (const issue of probe.error.issues) context.addIssue({ code: "custom", path: issue.path, message: issue.message });
    return z.NEVER;
  }
  const notes: LessonNotes = {};
  for (const layer of LAYERS) {
    const parsed = NoteSchema.safeParse(values[noteField(layer)] ?? "");
    if (!parsed.success) {
      context.addIssue({ code: "custom", path: [noteField(layer)], message: parsed.error.issues[0].message });
      return z.NEVER;
    }
    if (parsed.data) notes[layer] = parsed.data;
  }
  return { probe: probe.data, notes };
});

export const StepIndexSchema = z.coerce.number({ message: "That probe is not in the lesson." }).int().min(0).max(MAX_LESSON_STEPS - 1);

// ---------------------------------------------------------------------------------------------
// Drills (docs/decisions/016, "Drills")

const SeedSchema = z.coerce.number({ message: "Enter a whole number from 1 to 2147483647." }).int("Enter a whole number from 1 to 2147483647.").min(1, "Enter a whole number from 1 to 2147483647.").max(2147483647, "Enter a whole number from 1 to 2147483647.");
const CountSchema = z.coerce.number({ message: `Enter a number of probes from 1 to ${MAX_DRILL_PROBES}.` }).int(`Enter a number of probes from 1 to ${MAX_DRILL_PROBES}.`).min(1, `Enter a number of probes from 1 to ${MAX_DRILL_PROBES}.`).max(MAX_DRILL_PROBES, `Enter a number of probes from 1 to ${MAX_DRILL_PROBES}.`);

export const DrillDetailsSchema = z.object({
  title: lineText("a title", 100),
  introduction: paragraphText(4000),
  seed: z.preprocess((value) => (value === "" || value === undefined ? "1" : value), SeedSchema),
  count: z.preprocess((value) => (value === "" || value === undefined ? "10" : value), CountSchema),
});

export const NewDrillSchema = DrillDetailsSchema.extend({
  scenarioId: z.string({ message: "Choose a scenario." }).uuid("Choose a scenario."),
  kind: z.enum(DRILL_KINDS, { message: "Choose what kind of drill." }),
});

const capitalised = (text: string) => text.charAt(0).toUpperCase() + text.slice(1) + (text.endsWith(".") ? "" : ".");

/** A goal's form (probe → outcome): read through the engine's own probe expectation schema, messages beside each field. */
export const GoalFormSchema = z.record(z.string(), z.string()).transform((values, context): DrillGoal => {
  const input = {
    id: values.goalId ?? "goal",
    kind: "probe",
    from: values.from ?? "",
    interface: (values.interface ?? "").trim(),
    service: (values.service ?? "").trim(),
    ...(values.to?.trim() ? { to: values.to.trim() } : {}),
    when: values.when?.trim() || ALL_WEEK,
    expect: values.expect ?? "",
  };
  const parsed = ProbeExpectationSchema.safeParse(input);
  if (!parsed.success) {
    for (const issue of parsed.error.issues) context.addIssue({ code: "custom", path: issue.path, message: capitalised(issue.message) });
    return z.NEVER;
  }
  return parsed.data;
});

export const GoalIndexSchema = z.coerce.number({ message: "That goal is not in the drill." }).int().min(0).max(MAX_DRILL_GOALS - 1);

export const PredictAnswerSchema = z.object({
  index: z.coerce.number({ message: "That probe is not in the drill." }).int().min(0).max(MAX_DRILL_PROBES - 1),
  outcome: z.enum(OUTCOMES, { message: "Choose the outcome." }),
  layer: z.enum(LAYERS, { message: "Choose the layer that decides." }),
});

export const SpotAnswerSchema = z.object({ element: z.string({ message: "Pick the element that causes the finding." }).min(1, "Pick the element that causes the finding.").max(200, "Pick one of the model's elements.") });

export const MoveRuleSchema = z.object({
  ruleId: z.string().min(1).max(200),
  direction: z.enum(["up", "down"], { message: "Move a rule up or down." }),
});

export const SpotFindingSchema = z.object({ findingKey: z.string({ message: "Choose a finding." }).min(1, "Choose a finding.").max(1000, "Choose a finding.") });
