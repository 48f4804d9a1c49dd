import { create } from "zustand";
import type { TraceResult } from "#server/engine/trace";

export type ProbeFields = { from: string; interface: string; service: string; to: string; at: string; account: string };

type TraceState = {
  probe: ProbeFields;
  trace: TraceResult | null;
  error: string | null;
  /** How many layers the walkthrough shows: 0 hides them all, layers.length shows every verdict. */
  step: number;
  setProbe: (fields: Partial<ProbeFields>) => void;
  showResult: (trace: TraceResult | null, error: string | null) => void;
  setStep: (step: number) => void;
  /** The page's first state: a link opens at `step` (the first step, unless it asks for the whole trace). */
  reset: (probe: ProbeFields, trace: TraceResult | null, error: string | null, step: number) => void;
};

/** The trace page's editor state: the probe being typed, the last answer, the walkthrough step. */
export const useTraceStore = create<TraceState>((set) => ({
  probe: { from: "", interface: "", service: "", to: "", at: "", account: "" },
  trace: null,
  error: null,
  step: 0,
  setProbe: (fields) => set((state) => ({ probe: { ...state.probe, ...fields } })),
  showResult: (trace, error) => set({ trace, error, step: trace ? trace.layers.length : 0 }),
  setStep: (step) => set({ step }),
  reset: (probe, trace, error, step) => set({ probe, trace, error, step: trace ? Math.min(step, trace.layers.length) : 0 }),
}));
