import { Background, Handle, Position, ReactFlow, type Edge, type Node, type NodeProps } from "@xyflow/react";
import { useEffect, useMemo, useRef } from "react";
import { useNavigate } from "react-router";
import type { TraceResult } from "#server/engine/trace";
import { OUTCOME_LABELS, OutcomeChip } from "../outcome";
import { isOutcome, LAYERS, type InterfaceRole, type Layer, type Outcome } from "#server/engine/vocabulary";
import { cx } from "../ui/cx";
import { decidesText, LAYER_TITLES, outcomeSentence } from "#app/utils/trace-words";
import { DoorIcon } from "../training/door-icon";
import { plural } from "#server/engine/format";

export type CanvasModel = {
  interfaces: Array<{ name: string; role: InterfaceRole; addresses: string[]; listeners: string[] }>;
  rules: Array<{ id: string; position: number; action: string; enabled: boolean; interface: string; summary: string }>;
  defaultInbound: string;
  unlistenedPort: string;
  accounts: Array<{ name: string; loginSources: string[]; secondFactor: string; enabled: boolean }>;
};

type Verdict = "pass" | "stop" | "ahead" | "unreached" | "result";

type LayerNodeData = {
  title: string;
  verdict: Verdict;
  detail?: string;
  /** On the deciding layer: what it decided, so it is marked by that and not as "blocked". */
  outcome?: Outcome;
  body: React.ReactNode;
  href?: string;
  wide?: boolean;
};

const VERDICT_STYLE: Record<Exclude<Verdict, "stop">, string> = {
  pass: "border-success bg-success-soft/60",
  ahead: "border-dashed border-line-strong bg-surface",
  // Told by the sunken fill, the dotted edge and the words, not by fading the text below readable contrast (WCAG 2.2 SC 1.4.3).
  unreached: "border-dotted border-line-strong bg-surface-sunken",
  result: "border-brass bg-brass-soft/60 ring-2 ring-brass/30",
};

/**
 * The deciding layer in the colour of what it decided (the outcome's own token, app.css): a
 * layer that let a password login through is never drawn in the colour of "blocked".
 */
const DECIDING_STYLE: Record<Outcome, string> = {
  silent: "border-outcome-silent bg-outcome-silent/10 ring-2 ring-outcome-silent/30",
  refused: "border-outcome-refused bg-outcome-refused/10 ring-2 ring-outcome-refused/30",
  answered: "border-outcome-answered bg-outcome-answered/10 ring-2 ring-outcome-answered/30",
  "login-denied": "border-outcome-login-denied bg-outcome-login-denied/10 ring-2 ring-outcome-login-denied/30",
  "login-mfa": "border-outcome-login-mfa bg-outcome-login-mfa/10 ring-2 ring-outcome-login-mfa/30",
  "login-password": "border-outcome-login-password bg-outcome-login-password/10 ring-2 ring-outcome-login-password/30",
};
const DECIDING_BADGE: Record<Outcome, string> = {
  silent: "border border-outcome-silent bg-surface text-outcome-silent",
  refused: "border border-outcome-refused bg-surface text-outcome-refused",
  answered: "border border-outcome-answered bg-surface text-outcome-answered",
  "login-denied": "border border-outcome-login-denied bg-surface text-outcome-login-denied",
  "login-mfa": "border border-outcome-login-mfa bg-surface text-outcome-login-mfa",
  "login-password": "border border-outcome-login-password bg-surface text-outcome-login-password",
};

const VERDICT_WORDS: Record<Exclude<Verdict, "stop">, string> = { pass: "passes", ahead: "not shown yet", unreached: "not reached", result: "result" };

function LayerNode({ data }: NodeProps<Node<LayerNodeData>>) {
  const deciding = data.verdict === "stop" && data.outcome ? data.outcome : null;
  return (
    <div className={cx("rounded-card border-2 p-3 text-xs text-ink shadow-card", data.wide ? "w-72" : "w-52", deciding ? DECIDING_STYLE[deciding] : VERDICT_STYLE[data.verdict === "stop" ? "pass" : data.verdict])}>
      <Handle type="target" position={Position.Left} className="!bg-line-strong" />
      <div className="flex items-center justify-between gap-2">
        <span className="text-[11px] font-semibold tracking-wide text-ink-muted uppercase">{data.title}</span>
        <span className={cx("inline-flex items-center gap-1 rounded px-1.5 py-0.5 text-[10px] font-semibold", deciding ? DECIDING_BADGE[deciding] : data.verdict === "pass" ? "bg-success text-white dark:text-black" : "bg-surface-sunken text-ink-faint")}>
          {deciding ? <DoorIcon outcome={deciding} /> : null}
          {deciding ? decidesText(deciding) : VERDICT_WORDS[data.verdict === "stop" ? "pass" : data.verdict]}
        </span>
      </div>
      <div className="mt-2 space-y-1">{data.body}</div>
      {data.detail && (data.verdict === "pass" || data.verdict === "stop") ? <p className="mt-2 border-t border-line pt-2 text-[11px] text-ink-muted">{data.detail}</p> : null}
      <Handle type="source" position={Position.Right} className="!bg-line-strong" />
    </div>
  );
}

const NODE_TYPES = { layer: LayerNode };

/**
 * Every rule, full names wrapped, in a list that scrolls inside its node (wheel and keyboard):
 * nothing is cut silently. The matched rule, once revealed, is scrolled into view.
 */
function RuleList({ rules, matched, revealed, defaultInbound }: { rules: CanvasModel["rules"]; matched: string | null | undefined; revealed: boolean; defaultInbound: string }) {
  const list = useRef<HTMLOListElement>(null);
  useEffect(() => {
    if (!revealed || !matched || !list.current) return;
    const item = list.current.querySelector<HTMLElement>(`[data-rule="${CSS.escape(matched)}"]`);
    if (item) list.current.scrollTop = item.offsetTop - list.current.clientHeight / 2;
  }, [matched, revealed]);
  return (
    <>
      <ol
        ref={list}
        className="nowheel relative max-h-44 space-y-0.5 overflow-y-auto pr-1"
        aria-label={`Inbound rules, all ${rules.length}, in order`}
        // eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex -- a list that scrolls must be reachable by keyboard (WCAG 2.1.1)
        tabIndex={0}
      >
        {rules.map((rule) => (
          <li key={rule.id} data-rule={rule.id} title={rule.summary} className={cx("grid grid-cols-[1.5rem_1fr_auto] gap-1 font-mono text-[11px]", rule.id === matched && revealed ? "rounded bg-brass-soft font-semibold text-brass" : "text-ink-muted", !rule.enabled && "line-through opacity-60")}>
            <span className="text-right">{rule.position}</span>
            <span className="break-all">{rule.id}</span>
            <span>{rule.action}</span>
          </li>
        ))}
        {rules.length === 0 ? <li className="text-[11px] text-ink-faint">no rules</li> : null}
      </ol>
      <p className="mt-1 text-[11px] text-ink-faint">
        {rules.length > 10 ? `${plural(rules.length, { one: "rule", other: "rules" })} — scroll the list · ` : ""}no match → default {defaultInbound}
      </p>
    </>
  );
}

function gridPosition(index: number): { x: number; y: number } {
  // Columns wide enough for the rules node (w-72), rows tall enough for its scrolling list.
  return { x: (index % 4) * 320, y: Math.floor(index / 4) * 380 };
}

/**
 * The layers drawn left to right: probe → interface → inbound rules → listener → service kind →
 * login sources → second factor → outcome. Each node shows the elements it stands for and, up to
 * the walkthrough step, its verdict; a click opens that element's editor.
 */
/**
 * `modelPath` is where the traced model's sections are edited (`…/model` for the live device,
 * a proposal's `…/draft`); null for a model nobody edits (a past revision), whose nodes link nowhere.
 */
export function LayerCanvas({ model, trace, step, modelPath, probe }: { model: CanvasModel; trace: TraceResult | null; step: number; modelPath: string | null; probe: { from: string; interface: string; service: string } }) {
  const navigate = useNavigate();
  const { nodes, edges } = useMemo(() => {
    const section = (path: string): string | undefined => (modelPath === null ? undefined : `${modelPath}/${path}`);
    const verdictOf = (layer: Layer): { verdict: Verdict; detail?: string; outcome?: Outcome } => {
      if (!trace) return { verdict: "ahead" };
      const index = trace.layers.findIndex((entry) => entry.layer === layer);
      if (index < 0) return { verdict: step >= trace.layers.length ? "unreached" : "ahead" };
      if (index >= step) return { verdict: "ahead" };
      const entry = trace.layers[index];
      return entry.result === "stop" ? { verdict: "stop", detail: entry.detail, outcome: trace.outcome } : { verdict: "pass", detail: entry.detail };
    };
    // Whether a layer's verdict is shown yet: nothing the trace knows about later layers (the
    // eligible accounts, the matched rule) may show before them.
    const revealedLayer = (layer: Layer) => {
      const index = trace ? trace.layers.findIndex((entry) => entry.layer === layer) : -1;
      return index >= 0 && index < step;
    };
    const iface = model.interfaces.find((entry) => entry.name === (trace?.interface ?? probe.interface));
    const matched = trace?.ruleId;
    const eligible = new Set(trace?.eligibleAccounts ?? []);
    const layerNodes: Array<{ id: Layer; data: LayerNodeData }> = [
      {
        id: "arrival",
        data: {
          title: "Interface",
          ...verdictOf("arrival"),
          href: iface ? section(`interfaces?edit=${encodeURIComponent(iface.name)}#edit`) : undefined,
          body: iface ? (
            <>
              <p className="font-mono font-semibold">
                {iface.name} <span className="font-sans font-normal text-ink-muted">({iface.role})</span>
              </p>
              <p className="font-mono text-[11px] break-all text-ink-muted">{iface.addresses.join(", ") || "no addresses"}</p>
            </>
          ) : (
            <p className="text-ink-muted">Choose an interface</p>
          ),
        },
      },
      {
        id: "inbound-rules",
        data: {
          title: "Inbound rules",
          ...verdictOf("inbound-rules"),
          wide: true,
          href: section(`rules${matched && revealedLayer("inbound-rules") ? `?edit=${encodeURIComponent(matched)}#edit` : ""}`),
          body: <RuleList rules={model.rules} matched={matched} revealed={revealedLayer("inbound-rules")} defaultInbound={model.defaultInbound} />,
        },
      },
      {
        id: "listener",
        data: {
          title: "Listener",
          ...verdictOf("listener"),
          href: iface ? section(`interfaces?edit=${encodeURIComponent(iface.name)}#edit`) : undefined,
          body: (
            <p>
              Listening on {iface?.name ?? "—"}: <span className="font-mono">{iface?.listeners.join(", ") || "nothing"}</span>
            </p>
          ),
        },
      },
      {
        id: "service-kind",
        data: { title: "Service kind", ...verdictOf("service-kind"), href: section("services"), body: <p className="font-mono">{trace?.service ?? probe.service ?? "—"}</p> },
      },
      {
        id: "login-sources",
        data: {
          title: "Login sources",
          ...verdictOf("login-sources"),
          href: section("accounts"),
          body: (
            <ul className="space-y-0.5">
              {model.accounts.slice(0, 8).map((account) => (
                <li key={account.name} className={cx("font-mono text-[11px]", eligible.has(account.name) && revealedLayer("login-sources") ? "font-semibold text-brass" : "text-ink-muted", !account.enabled && "line-through")}>
                  {account.name}: {account.loginSources.join(", ") || "anywhere"}
                </li>
              ))}
              {model.accounts.length === 0 ? <li className="text-ink-faint">no accounts</li> : null}
            </ul>
          ),
        },
      },
      {
        id: "second-factor",
        data: {
          title: "Second factor",
          ...verdictOf("second-factor"),
          href: section("accounts"),
          body: (
            <ul className="space-y-0.5">
              {model.accounts
                // Only once the login sources are revealed does this list narrow to the eligible accounts.
                .filter((account) => !revealedLayer("login-sources") || eligible.size === 0 || eligible.has(account.name))
                .slice(0, 8)
                .map((account) => (
                  <li key={account.name} className="font-mono text-[11px] text-ink-muted">
                    {account.name}: {account.secondFactor === "totp" ? "TOTP" : "none"}
                  </li>
                ))}
            </ul>
          ),
        },
      },
    ];
    const done = trace !== null && step >= trace.layers.length;
    const nodes: Node[] = [
      {
        id: "probe",
        type: "layer",
        position: { x: 0, y: 0 },
        data: {
          title: "Probe",
          verdict: trace ? "pass" : "ahead",
          body: (
            <>
              <p className="font-mono font-semibold break-all">{trace?.from ?? probe.from ?? "—"}</p>
              <p className="text-ink-muted">
                to {trace?.to ?? "—"} · {trace?.service ?? probe.service}
              </p>
            </>
          ),
        } satisfies LayerNodeData,
      },
      // Two rows of four, read like text: probe → interface → rules → listener, then service kind →
      // login sources → second factor → outcome, so each node stays legible on a laptop screen.
      ...layerNodes.map((node, index) => ({ id: node.id, type: "layer", position: gridPosition(index + 1), data: node.data })),
      {
        id: "outcome",
        type: "layer",
        position: gridPosition(7),
        data: {
          title: "Outcome",
          verdict: done ? "result" : "ahead",
          body:
            done && trace && isOutcome(trace.outcome) ? (
              <>
                <OutcomeChip outcome={trace.outcome} />
                <p className="mt-1 text-[11px]">{outcomeSentence(trace, model.rules.find((rule) => rule.id === trace.ruleId)?.position)}</p>
              </>
            ) : (
              <p className="text-ink-muted">{trace ? "Predict it, then step on." : "—"}</p>
            ),
        } satisfies LayerNodeData,
      },
    ];
    const order = ["probe", ...LAYERS, "outcome"];
    const reachedUpTo = trace ? Math.min(step, trace.layers.length) : 0;
    const edges: Edge[] = order.slice(1).map((id, index) => ({
      id: `${order[index]}-${id}`,
      source: order[index],
      target: id,
      type: "smoothstep",
      animated: index < reachedUpTo,
      style: { stroke: index < reachedUpTo ? "var(--color-harbour)" : "var(--color-line-strong)", strokeWidth: index < reachedUpTo ? 2.5 : 1.5 },
    }));
    return { nodes, edges };
  }, [model, trace, step, modelPath, probe]);

  return (
    <div className="h-[34rem] w-full overflow-hidden rounded-card border border-line bg-surface" role="region" aria-label={trace ? `Layer canvas: ${trace.layers.slice(0, step).map((layer) => `${LAYER_TITLES[layer.layer]} ${layer.result === "stop" ? decidesText(trace.outcome) : "passes"}`).join(", ")}${trace && step >= trace.layers.length ? `; outcome ${OUTCOME_LABELS[trace.outcome]}` : ""}` : "Layer canvas: no probe yet"}>
      <ReactFlow
        nodes={nodes}
        edges={edges}
        nodeTypes={NODE_TYPES}
        fitView
        fitViewOptions={{ padding: 0.08 }}
        nodesDraggable={false}
        nodesConnectable={false}
        elementsSelectable
        onNodeClick={(_, node) => {
          const href = (node.data as LayerNodeData).href;
          if (href) navigate(href);
        }}
        minZoom={0.3}
      >
        <Background gap={24} color="var(--color-line)" />
      </ReactFlow>
    </div>
  );
}
