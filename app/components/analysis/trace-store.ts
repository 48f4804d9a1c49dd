import { create } from "zustand";
import type { TraceResult } from "#server/engine/trace";
import type { TraceGroups } from "#server/engine/source-groups";

export type ProbeFields = { from: string; interface: string; service: string; to: string; at: string; account: string };

type TraceState = {
  probe: ProbeFields;
  trace: TraceResult | null;
  /** For a CIDR source: every group of sources with the same answer; `trace` is the chosen group's. */
  groups: TraceGroups | null;
  group: number;
  error: string | null;
  /** How many layers the walkthrough shows: 0 hides them all, layers.length shows every verdict. */
  step: number;
  setProbe: (fields: Partial<ProbeFields>) => void;
  showResult: (answer: TraceAnswer | null, error: string | null) => void;
  chooseGroup: (index: number) => void;
  setStep: (step: number) => void;
  /** The page's first state: a link opens at the first step, unless it asks for the whole trace (`revealAll`). */
  reset: (probe: ProbeFields, answer: TraceAnswer | null, error: string | null, revealAll: boolean) => void;
};

/** What the trace API answers: one trace for an address, groups for a CIDR block. */
export type TraceAnswer = TraceResult | TraceGroups;

function shown(answer: TraceAnswer | null): { trace: TraceResult | null; groups: TraceGroups | null; group: number; step: number } {
  if (answer === null) return { trace: null, groups: null, group: 0, step: 0 };
  if ("groups" in answer) {
    const first = answer.groups[0]?.trace ?? null;
    return { trace: first, groups: answer, group: 0, step: first ? first.layers.length : 0 };
  }
  return { trace: answer, groups: null, group: 0, step: answer.layers.length };
}

/** The trace page's editor state: the probe being typed, the last answer, the walkthrough step. */
export const useTraceStore = create<TraceState>((set) => ({
  probe: { from: "", interface: "", service: "", to: "", at: "", account: "" },
  trace: null,
  groups: null,
  group: 0,
  error: null,
  step: 0,
  setProbe: (fields) => set((state) => ({ probe: { ...state.probe, ...fields } })),
  showResult: (answer, error) => set({ ...shown(answer), error }),
  chooseGroup: (index) =>
    set((state) => {
      const trace = state.groups?.groups[index]?.trace ?? null;
      return trace ? { group: index, trace, step: trace.layers.length } : {};
    }),
  setStep: (step) => set({ step }),
  reset: (probe, answer, error, revealAll) => {
    const first = shown(answer);
    set({ probe, ...first, step: revealAll ? first.step : 0, error });
  },
}));
