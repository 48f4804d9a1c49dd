import { closestCenter, DndContext, KeyboardSensor, PointerSensor, useSensor, useSensors, type DragEndEvent } from "@dnd-kit/core";
import { SortableContext, sortableKeyboardCoordinates, useSortable, verticalListSortingStrategy } from "@dnd-kit/sortable";
import { CSS } from "@dnd-kit/utilities";
import { useState } from "react";
import { Link, useSubmit } from "react-router";
import { ALL_WEEK_SCHEDULE, ANY_INTERFACE, type RuleAction } from "#server/engine/vocabulary";
import type { ModelDocument } from "#server/workspace/document";
import { Badge } from "../ui/card";
import { cx } from "../ui/cx";
import { EmptyState } from "../ui/empty-state";
import { LabelledOptions, SelectField, TextField } from "../ui/field";
import { ActionButton, EditorForm, EditorPanel, listText, NameHint, SaveButton, TextAreaField, valuesFor } from "./editor-kit";
import type { SectionEditorProps } from "./section-editor";

type Rule = ModelDocument["inboundRules"][number];

const ACTION_LABELS: Record<RuleAction, string> = {
  allow: "allow (continue to the listener and login layers)",
  deny: "deny (silently drop)",
};

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
        {props.canEdit ? (
          <button
            type="button"
            className="cursor-grab rounded px-1 text-ink-faint hover:text-ink active:cursor-grabbing"
            aria-label={`Drag to reorder rule ${rule.id}; with the keyboard press space, arrows, then space`}
            {...attributes}
            {...listeners}
          >
            ⠿
          </button>
        ) : null}
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
          <ActionButton intent="move-rule" baseRevision={props.baseRevision} fields={{ ruleId: rule.id, to: String(Math.max(1, position - 1)) }} label="↑" accessibleLabel={`Move rule ${rule.id} up`} />
          <ActionButton intent="move-rule" baseRevision={props.baseRevision} fields={{ ruleId: rule.id, to: String(Math.min(count, position + 1)) }} label="↓" accessibleLabel={`Move rule ${rule.id} down`} />
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
      <div className="space-y-3">
        <p className="text-sm text-ink-muted">
          Read top to bottom; the first rule that matches decides. A deny is silent. When none matches, the device's default applies ({props.document.device.defaultInbound}).
        </p>
        {rules.length === 0 ? (
          <EmptyState title="No inbound rules">Allow the operator networks to the management services, then finish with a rule that drops everything else.</EmptyState>
        ) : (
          <DndContext sensors={sensors} collisionDetection={closestCenter} onDragEnd={onDragEnd}>
            <SortableContext items={order} strategy={verticalListSortingStrategy}>
              <ol className="overflow-hidden rounded-card border border-line shadow-card" aria-label="Inbound rules in order">
                {order.map((id, index) => {
                  const rule = byId.get(id);
                  return rule ? <RuleRow key={id} rule={rule} position={index + 1} count={order.length} props={props} /> : null;
                })}
              </ol>
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
            <TextAreaField
              label="Sources"
              name="sources"
              rows={2}
              defaultValue={submitted ? values.sources : listText({}, "sources", editing?.sources ?? ["any"])}
              error={errors.sources}
              hint={<NameHint label="Address names (and any, any4, any6)" names={[...props.names.addresses, ...props.names.sharedAddresses]} />}
            />
            <TextAreaField label="Destinations" name="destinations" rows={2} defaultValue={submitted ? values.destinations : listText({}, "destinations", editing?.destinations ?? ["any"])} error={errors.destinations} />
            <TextAreaField
              label="Services"
              name="services"
              rows={2}
              defaultValue={submitted ? values.services : listText({}, "services", editing?.services)}
              error={errors.services}
              hint={<NameHint label="Services (and any)" names={[...props.names.services.map((service) => service.name), ...props.names.serviceGroups]} />}
            />
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
