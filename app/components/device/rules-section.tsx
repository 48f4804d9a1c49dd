import { closestCenter, DndContext, KeyboardSensor, PointerSensor, useSensor, useSensors, type DragEndEvent } from "@dnd-kit/core";
import { SortableContext, sortableKeyboardCoordinates, useSortable, verticalListSortingStrategy } from "@dnd-kit/sortable";
import { CSS } from "@dnd-kit/utilities";
import { useState, type CSSProperties } from "react";
import { Form, Link, useLocation, useSubmit } from "react-router";
import { ALL_WEEK_SCHEDULE, ANY_INTERFACE, BUILTIN_ADDRESS_NAMES, type RuleAction } from "#server/engine/vocabulary";
import type { ModelDocument } from "#server/workspace/document";
import { Badge } from "../ui/card";
import { cx } from "../ui/cx";
import { EmptyState } from "../ui/empty-state";
import { LabelledOptions, SelectField, TextField } from "../ui/field";
import { NamePicker } from "./name-picker";
import { ActionButton, EditorForm, EditorPanel, pickedNames, SaveButton, valuesFor } from "./editor-kit";
import { addressNameGroups, serviceNameGroups } from "./name-groups";
import type { SectionEditorProps } from "./section-editor";
import type { RuleView } from "#server/http/preferences.server";

type Rule = ModelDocument["inboundRules"][number];

/** A new rule starts from every source and every device address (the built-in `any`). */
const ANY_ADDRESS = BUILTIN_ADDRESS_NAMES[0];

const ACTION_LABELS: Record<RuleAction, string> = {
  allow: "allow (continue to the listener and login layers)",
  deny: "deny (silently drop)",
};

/** ↑ and ↓: one place up or down; ↑ is off on the first rule and ↓ on the last, where they could do nothing. */
function MoveButtons({ rule, position, count, props }: { rule: Rule; position: number; count: number; props: SectionEditorProps }) {
  return (
    <>
      <ActionButton intent="move-rule" baseRevision={props.baseRevision} fields={{ ruleId: rule.id, to: String(position - 1) }} label="↑" accessibleLabel={`Move rule ${rule.id} up`} disabled={position <= 1} />
      <ActionButton intent="move-rule" baseRevision={props.baseRevision} fields={{ ruleId: rule.id, to: String(position + 1) }} label="↓" accessibleLabel={`Move rule ${rule.id} down`} disabled={position >= count} />
    </>
  );
}

function DragHandle({ rule, handle }: { rule: Rule; handle: Pick<ReturnType<typeof useSortable>, "attributes" | "listeners"> }) {
  return (
    <button
      type="button"
      className="cursor-grab rounded px-1 text-ink-faint hover:text-ink active:cursor-grabbing"
      aria-label={`Drag to reorder rule ${rule.id}; with the keyboard press space, arrows, then space`}
      {...handle.attributes}
      {...handle.listeners}
    >
      ⠿
    </button>
  );
}

function RuleRow({ rule, position, count, props }: { rule: Rule; position: number; count: number; props: SectionEditorProps }) {
  const { setNodeRef, transform, transition, isDragging, attributes, listeners } = useSortable({ id: rule.id, disabled: !props.canEdit });
  const style = { transform: CSS.Transform.toString(transform), transition };
  return (
    <li
      ref={setNodeRef}
      style={style}
      className={cx("grid grid-cols-[2.5rem_1fr] items-start gap-x-3 gap-y-2 border-b border-line bg-surface px-3 py-3 last:border-b-0", isDragging && "relative z-10 shadow-overlay", !rule.enabled && "bg-surface-sunken")}
      aria-label={`Rule ${rule.id} at position ${position}`}
    >
      <div className="flex flex-col items-center gap-1">
        <span className="tabular text-sm font-semibold text-ink-muted">{position}</span>
        {props.canEdit ? <DragHandle rule={rule} handle={{ attributes, listeners }} /> : null}
      </div>
      <div className="min-w-0 text-sm">
        <div className="flex flex-wrap items-center gap-2">
          <code className="font-semibold">{rule.id}</code>
          <Badge tone={rule.action === "allow" ? "success" : "danger"}>{rule.action}</Badge>
          {!rule.enabled ? <Badge>disabled</Badge> : null}
          {rule.schedule !== ALL_WEEK_SCHEDULE ? <Badge tone="brass">schedule {rule.schedule}</Badge> : null}
          <span className="text-ink-muted">on {rule.interface}</span>
        </div>
        <p className="mt-1 font-mono text-xs break-words text-ink-muted">
          from {rule.sources.join(", ")} → to {rule.destinations.join(", ")} · services {rule.services.join(", ")}
        </p>
        {rule.note ? <p className="mt-1 text-xs text-ink-faint">{rule.note}</p> : null}
      </div>
      {props.canEdit ? (
        <div className="col-start-2 -ml-2 flex flex-wrap gap-1">
          <MoveButtons rule={rule} position={position} count={count} props={props} />
          <ActionButton intent={rule.enabled ? "disable-rule" : "enable-rule"} baseRevision={props.baseRevision} fields={{ ruleId: rule.id }} label={rule.enabled ? "Disable" : "Enable"} accessibleLabel={`${rule.enabled ? "Disable" : "Enable"} rule ${rule.id}`} />
          <ActionButton intent="duplicate-rule" baseRevision={props.baseRevision} fields={{ ruleId: rule.id }} label="Duplicate" accessibleLabel={`Duplicate rule ${rule.id}`} />
          <Link to={`?edit=${encodeURIComponent(rule.id)}#edit`} preventScrollReset className="inline-flex h-8 items-center px-2 text-sm text-harbour underline underline-offset-4" aria-label={`Edit rule ${rule.id}`}>
            Edit
          </Link>
          <ActionButton intent="delete-rule" baseRevision={props.baseRevision} fields={{ ruleId: rule.id }} label="Delete" variant="ghost-danger" accessibleLabel={`Delete rule ${rule.id}`} />
        </div>
      ) : null}
    </li>
  );
}

const RULE_VIEW_LABELS: Record<RuleView, string> = { detailed: "Detailed", compact: "Compact" };

const COMPACT_COLUMNS = ["#", "Rule", "Action", "Interface", "From", "To", "Services", "Schedule"] as const;

/** Detailed (a card per rule) or compact (a line per rule, for long lists); remembered in a cookie by a plain form post. */
function RuleViewToggle({ view }: { view: RuleView }) {
  const location = useLocation();
  return (
    <Form method="post" action="/preferences" preventScrollReset className="flex items-center gap-1" aria-label="Rule list view">
      <input type="hidden" name="returnTo" value={location.pathname + location.search} />
      <span className="mr-1 text-xs text-ink-muted">View</span>
      {(Object.keys(RULE_VIEW_LABELS) as RuleView[]).map((option) => (
        <button
          key={option}
          type="submit"
          name="ruleView"
          value={option}
          aria-pressed={view === option}
          className="rounded-md border border-line px-2 py-1 text-xs aria-pressed:border-harbour aria-pressed:bg-harbour-soft aria-pressed:text-harbour"
        >
          {RULE_VIEW_LABELS[option]}
        </button>
      ))}
    </Form>
  );
}

/** A list cell that keeps to one line: the names joined, cut with an ellipsis, all of them in the tooltip. */
function NamesCell({ names }: { names: readonly string[] }) {
  const text = names.join(", ");
  return (
    <td className="px-2 py-1 font-mono text-xs" title={text}>
      <div className="max-w-40 truncate">{text}</div>
    </td>
  );
}

/** One table line per rule: position, id, action, interface, from, to, services, schedule, and ↑ ↓ Edit. */
function CompactRuleRow({ rule, position, count, props }: { rule: Rule; position: number; count: number; props: SectionEditorProps }) {
  const { setNodeRef, transform, transition, isDragging, attributes, listeners } = useSortable({ id: rule.id, disabled: !props.canEdit });
  const style: CSSProperties = { transform: CSS.Transform.toString(transform), transition };
  return (
    <tr
      ref={setNodeRef}
      style={style}
      className={cx("border-t border-line bg-surface whitespace-nowrap", isDragging && "relative z-10 shadow-overlay", !rule.enabled && "bg-surface-sunken text-ink-muted")}
      aria-label={`Rule ${rule.id} at position ${position}`}
    >
      <td className="px-2 py-1 tabular text-xs font-semibold text-ink-muted">
        <span className="inline-flex items-center gap-1">
          {props.canEdit ? <DragHandle rule={rule} handle={{ attributes, listeners }} /> : null}
          {position}
        </span>
      </td>
      <td className="px-2 py-1 font-mono text-xs font-semibold" title={rule.note ? `${rule.id}: ${rule.note}` : rule.id}>
        <div className="flex max-w-48 items-center gap-1">
          <span className="truncate">{rule.id}</span>
          {!rule.enabled ? <span className="font-sans font-normal">(disabled)</span> : null}
        </div>
      </td>
      <td className="px-2 py-1">
        <Badge tone={rule.action === "allow" ? "success" : "danger"}>{rule.action}</Badge>
      </td>
      <td className="px-2 py-1 font-mono text-xs">{rule.interface}</td>
      <NamesCell names={rule.sources} />
      <NamesCell names={rule.destinations} />
      <NamesCell names={rule.services} />
      <td className="px-2 py-1 font-mono text-xs">{rule.schedule === ALL_WEEK_SCHEDULE ? <span className="text-ink-faint">{rule.schedule}</span> : rule.schedule}</td>
      {props.canEdit ? (
        <td className="px-1 py-0.5 text-right">
          <span className="inline-flex items-center gap-0.5">
            <MoveButtons rule={rule} position={position} count={count} props={props} />
            <Link to={`?edit=${encodeURIComponent(rule.id)}#edit`} preventScrollReset className="inline-flex h-8 items-center px-2 text-sm text-harbour underline underline-offset-4" aria-label={`Edit rule ${rule.id}`}>
              Edit
            </Link>
          </span>
        </td>
      ) : null}
    </tr>
  );
}

/** The ordered inbound rules: read top to bottom, first match wins. Drag, keyboard or arrows reorder. */
export function RulesSection(props: SectionEditorProps) {
  const rules = props.document.inboundRules;
  const [order, setOrder] = useState(rules.map((rule) => rule.id));
  // New rules from the loader replace the optimistic order during render, not in an effect
  // (react.dev "You Might Not Need an Effect": adjusting state when a prop changes).
  const [orderOf, setOrderOf] = useState(rules);
  if (orderOf !== rules) {
    setOrderOf(rules);
    setOrder(rules.map((rule) => rule.id));
  }
  const submit = useSubmit();
  const sensors = useSensors(useSensor(PointerSensor, { activationConstraint: { distance: 4 } }), useSensor(KeyboardSensor, { coordinateGetter: sortableKeyboardCoordinates }));
  const byId = new Map(rules.map((rule) => [rule.id, rule]));
  const editing = rules.find((rule) => rule.id === props.editing);
  const editingPosition = editing ? rules.indexOf(editing) + 1 : undefined;
  const { values, errors } = valuesFor(props, "save-rule");
  const submitted = props.values.intent === "save-rule";
  const addressGroups = addressNameGroups(props.names);

  function onDragEnd(event: DragEndEvent) {
    const { active, over } = event;
    if (!over || active.id === over.id) return;
    const to = order.indexOf(String(over.id)) + 1;
    setOrder((current) => {
      const next = current.filter((id) => id !== active.id);
      next.splice(to - 1, 0, String(active.id));
      return next;
    });
    submit({ intent: "move-rule", baseRevision: String(props.baseRevision), ruleId: String(active.id), to: String(to) }, { method: "post", preventScrollReset: true });
  }

  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
      {/* min-w-0: a wide rule table scrolls inside its card instead of widening the page. */}
      <div className="min-w-0 space-y-3">
        <div className="flex flex-wrap items-start justify-between gap-3">
          <p className="max-w-prose text-sm text-ink-muted">
            Read top to bottom; the first rule that matches decides. A deny is silent. When none matches, the device's default applies ({props.document.device.defaultInbound}).
          </p>
          {rules.length > 0 ? <RuleViewToggle view={props.ruleView} /> : null}
        </div>
        {rules.length === 0 ? (
          <EmptyState title="No inbound rules">Allow the operator networks to the management services, then finish with a rule that drops everything else.</EmptyState>
        ) : (
          <DndContext sensors={sensors} collisionDetection={closestCenter} onDragEnd={onDragEnd}>
            <SortableContext items={order} strategy={verticalListSortingStrategy}>
              {props.ruleView === "compact" ? (
                <div className="overflow-x-auto rounded-card border border-line bg-surface shadow-card">
                  <table className="w-full border-collapse text-sm" aria-label="Inbound rules in order">
                    <thead>
                      <tr className="bg-surface-sunken text-left text-xs font-semibold tracking-wide text-ink-muted uppercase">
                        {COMPACT_COLUMNS.map((column) => (
                          <th key={column} scope="col" className="px-2 py-1.5">
                            {column}
                          </th>
                        ))}
                        {props.canEdit ? (
                          <th scope="col" className="px-2 py-1.5 text-right">
                            <span className="sr-only">Actions</span>
                          </th>
                        ) : null}
                      </tr>
                    </thead>
                    <tbody>
                      {order.map((id, index) => {
                        const rule = byId.get(id);
                        return rule ? <CompactRuleRow key={id} rule={rule} position={index + 1} count={order.length} props={props} /> : null;
                      })}
                    </tbody>
                  </table>
                </div>
              ) : (
                <ol className="overflow-hidden rounded-card border border-line shadow-card" aria-label="Inbound rules in order">
                  {order.map((id, index) => {
                    const rule = byId.get(id);
                    return rule ? <RuleRow key={id} rule={rule} position={index + 1} count={order.length} props={props} /> : null;
                  })}
                </ol>
              )}
            </SortableContext>
          </DndContext>
        )}
        <p className="text-xs text-ink-faint">Changing rule order can lock the team out. Check the lockout findings before the change window, and keep a tested break-glass path.</p>
      </div>
      {props.canEdit ? (
        <EditorPanel title={editing ? `Edit rule ${editing.id}` : "Add an inbound rule"} cancel={Boolean(editing)}>
          <EditorForm intent="save-rule" baseRevision={props.baseRevision} className="space-y-4" label="Inbound rule">
            <input type="hidden" name="original" value={editing?.id ?? ""} />
            <div className="grid grid-cols-2 gap-3">
              <TextField label="Rule id" name="id" defaultValue={values.id ?? editing?.id} error={errors.id} placeholder="automatic" maxLength={63} />
              <TextField label="Position" name="position" inputMode="numeric" defaultValue={values.position ?? editingPosition?.toString()} error={errors.position} placeholder={`${rules.length + 1} (last)`} />
            </div>
            <SelectField label="Action" name="action" defaultValue={values.action ?? editing?.action ?? "allow"} error={errors.action}>
              <LabelledOptions labels={ACTION_LABELS} />
            </SelectField>
            <SelectField label="Interface" name="interface" defaultValue={values.interface ?? editing?.interface ?? ANY_INTERFACE} error={errors.interface}>
              <option value={ANY_INTERFACE}>{ANY_INTERFACE}</option>
              {props.names.interfaces.map((name) => (
                <option key={name} value={name}>
                  {name}
                </option>
              ))}
            </SelectField>
            <NamePicker label="Sources" name="sources" groups={addressGroups} defaultValue={pickedNames(props, "save-rule", "sources", editing?.sources ?? [ANY_ADDRESS])} error={errors.sources} rows={2} />
            <NamePicker
              label="Destinations"
              name="destinations"
              groups={addressGroups}
              defaultValue={pickedNames(props, "save-rule", "destinations", editing?.destinations ?? [ANY_ADDRESS])}
              error={errors.destinations}
              hint="The device addresses the rule protects; any for all of them."
              rows={2}
            />
            <NamePicker label="Services" name="services" groups={serviceNameGroups(props.names)} defaultValue={pickedNames(props, "save-rule", "services", editing?.services)} error={errors.services} rows={2} />
            <SelectField label="Schedule" name="schedule" defaultValue={values.schedule ?? editing?.schedule ?? ALL_WEEK_SCHEDULE} error={errors.schedule}>
              <option value={ALL_WEEK_SCHEDULE}>{ALL_WEEK_SCHEDULE}</option>
              {props.names.schedules.map((name) => (
                <option key={name} value={name}>
                  {name}
                </option>
              ))}
            </SelectField>
            <TextField label="Note" name="note" defaultValue={values.note ?? editing?.note} error={errors.note} maxLength={500} />
            <label className="flex items-center gap-2 text-sm">
              <input type="checkbox" name="enabled" defaultChecked={submitted ? values.enabled === "on" : (editing?.enabled ?? true)} />
              Enabled
            </label>
            <SaveButton>{editing ? "Save rule" : "Add rule"}</SaveButton>
          </EditorForm>
        </EditorPanel>
      ) : null}
    </div>
  );
}
