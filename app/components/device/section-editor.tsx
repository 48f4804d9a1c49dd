import {
  ACCESS_LEVELS,
  ALL_WEEK_SCHEDULE,
  PORT_PROTOCOLS,
  type CustomServiceKind,
  type InterfaceRole,
  type RuleAction,
  type SecondFactor,
  type UnlistenedPortAction,
} from "#server/engine/vocabulary";
import type { ModelDocument } from "#server/workspace/document";
import type { DocumentChange } from "#server/workspace/document-diff";
import type { RuleView } from "#server/http/preferences.server";
import { Badge, Card } from "../ui/card";
import { EmptyState } from "../ui/empty-state";
import { LabelledOptions, SelectField, TextField, WordOptions } from "../ui/field";
import { Table, Td, Th } from "../ui/table";
import {
  ActionButton,
  CheckboxGroup,
  checkedList,
  EditorForm,
  EditorPanel,
  FormMessage,
  listText,
  NameHint,
  pickedNames,
  SaveButton,
  TextAreaField,
  valuesFor,
  type EditorProps,
} from "./editor-kit";
import { ListenersByKind, ListenerToggles, type ListedService } from "./listener-toggles";
import { NamePicker, type NameGroup } from "./name-picker";
import { addressNameGroups, serviceNameGroups, type EditorNames } from "./name-groups";
import { RulesSection } from "./rules-section";
import type { DeviceSection } from "./sections";
import type { ReactNode } from "react";
import { Link } from "react-router";
import { WRITTEN_REASON_MIN } from "#server/proposals/state";

// The choices of the editor's selects, worded for the person editing; keyed by the engine's
// words so a new one needs its wording here.
const SERVICE_KIND_LABELS: Record<CustomServiceKind, string> = {
  login: "login (presents a login page or banner)",
  other: "other (answers without a login)",
};

// WAN and LAN as RFC 7084 names a router's interfaces, DMZ as NIST SP 800-41 (PRODUCT.md §4).
const INTERFACE_ROLE_LABELS: Record<InterfaceRole, string> = {
  wan: "wan — toward the internet or another party",
  lan: "lan — the organisation's own network",
  dmz: "dmz — public-facing servers, apart from the lan",
  management: "management — reserved for administering devices",
  other: "other",
};

/** Roles whose interfaces outsiders can reach: the internet-login-exposed finding looks at these. */
const OUTWARD_ROLES: ReadonlySet<InterfaceRole> = new Set(["wan", "dmz"]);

const SECOND_FACTOR_LABELS: Record<SecondFactor, string> = {
  totp: "TOTP (RFC 6238)",
  none: "none",
};

const DEFAULT_INBOUND_LABELS: Record<RuleAction, string> = {
  allow: "allow — rules only restrict (most devices)",
  deny: "deny — silent unless a rule allows",
};

const UNLISTENED_PORT_LABELS: Record<UnlistenedPortAction, string> = {
  drop: "drop — no answer",
  reset: "reset — answer with a reset or port-unreachable (reveals the device)",
};

export type SectionEditorProps = EditorProps & {
  section: DeviceSection;
  document: ModelDocument;
  siteId: string;
  sites: Array<{ id: string; name: string }>;
  names: EditorNames & { services: ListedService[] };
  ruleView: RuleView;
  conflict?: { currentNumber: number; changes: DocumentChange[]; message: string };
  /** Editing a proposal's draft: the model only, so no site choice and no deleting the device. */
  draft?: boolean;
  /** Changes go through proposals: deleting the device is an admin's break-glass step, with a written reason. */
  deleteNeedsReason?: boolean;
};

function Conflict({ conflict }: { conflict: NonNullable<SectionEditorProps["conflict"]> }) {
  return (
    <Card className="mb-6 border-warning/50 bg-warning-soft p-5" role="alert">
      <h2 className="font-semibold text-warning">Not saved: someone else changed this device (now revision r{conflict.currentNumber})</h2>
      <p className="mt-1 text-sm">{conflict.message}</p>
      <p className="mt-1 text-sm">Your input is still in the form. Review what changed, then save again to apply your change on top of revision r{conflict.currentNumber}.</p>
      <ul className="mt-3 list-disc space-y-1 pl-5 text-sm">
        {conflict.changes.map((change, index) => (
          <li key={index}>
            <strong>{change.section}</strong>: {change.change} <code>{change.element}</code>
            {change.details.length ? ` — ${change.details.join("; ")}` : ""}
          </li>
        ))}
      </ul>
    </Card>
  );
}

export function SectionEditor(props: SectionEditorProps) {
  const body = (() => {
    switch (props.section) {
      case "interfaces":
        return <InterfacesSection {...props} />;
      case "addresses":
        return <AddressesSection {...props} />;
      case "services":
        return <ServicesSection {...props} />;
      case "schedules":
        return <SchedulesSection {...props} />;
      case "rules":
        return <RulesSection {...props} />;
      case "accounts":
        return <AccountsSection {...props} />;
      case "operator-networks":
        return <OperatorNetworksSection {...props} />;
      case "settings":
        return <SettingsSection {...props} />;
    }
  })();
  return (
    <>
      {props.conflict ? <Conflict conflict={props.conflict} /> : <FormMessage errors={props.errors} />}
      <div className="mt-4">{body}</div>
    </>
  );
}

type Column<Item> = { header: string; cell: (item: Item) => ReactNode; className?: string };

/** A section's list of named elements, with edit and delete on each row for editors. */
function ElementTable<Item extends { name: string }>({ props, items, kind, deleteIntent, columns }: { props: SectionEditorProps; items: Item[]; kind: string; deleteIntent: string; columns: Array<Column<Item>> }) {
  return (
    <Table>
      <thead>
        <tr>
          {columns.map((column) => (
            <Th key={column.header}>{column.header}</Th>
          ))}
          <Th className="text-right">Actions</Th>
        </tr>
      </thead>
      <tbody>
        {items.map((item) => (
          <tr key={item.name}>
            {columns.map((column) => (
              <Td key={column.header} className={column.className}>
                {column.cell(item)}
              </Td>
            ))}
            <Td>
              <RowActions props={props} name={item.name} deleteIntent={deleteIntent} kind={kind} />
            </Td>
          </tr>
        ))}
      </tbody>
    </Table>
  );
}

function editLink(name: string) {
  return `?edit=${encodeURIComponent(name)}#edit`;
}

function RowActions({ props, name, deleteIntent, kind }: { props: SectionEditorProps; name: string; deleteIntent: string; kind: string }) {
  if (!props.canEdit) return null;
  return (
    <span className="flex justify-end gap-1">
      <Link to={editLink(name)} preventScrollReset className="inline-flex h-8 items-center px-2 text-sm text-harbour underline underline-offset-4" aria-label={`Edit ${kind} ${name}`}>
        Edit
      </Link>
      <ActionButton intent={deleteIntent} baseRevision={props.baseRevision} fields={{ name }} label="Delete" variant="ghost-danger" accessibleLabel={`Delete ${kind} ${name}`} />
    </span>
  );
}

function InterfacesSection(props: SectionEditorProps) {
  const items = props.document.interfaces;
  const editing = items.find((item) => item.name === props.editing);
  const { values, errors } = valuesFor(props, "save-interface");
  const submitted = props.values.intent === "save-interface";
  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
      {items.length === 0 ? (
        <EmptyState title="No interfaces yet">Add the interfaces the device has, with their addresses and the management services listening on each.</EmptyState>
      ) : (
        <ElementTable
          props={props}
          items={items}
          kind="interface"
          deleteIntent="delete-interface"
          columns={[
            { header: "Interface", cell: (item) => item.name, className: "font-mono font-medium" },
            { header: "Role", cell: (item) => <Badge tone={OUTWARD_ROLES.has(item.role) ? "brass" : "neutral"}>{item.role}</Badge> },
            { header: "Addresses", cell: (item) => item.addresses.join(", ") || "—", className: "font-mono text-xs" },
            { header: "Listeners", cell: (item) => <ListenersByKind listeners={item.listeners} services={props.names.services} />, className: "text-xs" },
          ]}
        />
      )}
      {props.canEdit ? (
        <EditorPanel title={editing ? `Edit interface ${editing.name}` : "Add an interface"} cancel={Boolean(editing)}>
          <EditorForm intent="save-interface" baseRevision={props.baseRevision} className="space-y-4" label="Interface">
            <input type="hidden" name="original" value={editing?.name ?? ""} />
            <TextField label="Name" name="name" defaultValue={values.name ?? editing?.name} error={errors.name} maxLength={63} />
            <SelectField label="Role" name="role" defaultValue={values.role ?? editing?.role ?? "lan"} error={errors.role}>
              <LabelledOptions labels={INTERFACE_ROLE_LABELS} />
            </SelectField>
            <TextAreaField label="Addresses" name="addresses" defaultValue={listText(values, "addresses", editing?.addresses)} error={errors.addresses} hint="One per line, with prefix length: 192.0.2.1/24, 2001:db8:1::1/64." />
            <ListenerToggles
              services={props.names.services}
              checked={checkedList(values, "listeners", editing?.listeners, submitted)}
              error={errors.listeners}
              hint="The management services answering on this interface. Listen only where administrators connect; prefer https and ssh to http and telnet."
            />
            <SaveButton>{editing ? "Save interface" : "Add interface"}</SaveButton>
          </EditorForm>
        </EditorPanel>
      ) : null}
    </div>
  );
}

function AddressesSection(props: SectionEditorProps) {
  const objects = props.document.addresses;
  const groups = props.document.addressGroups;
  const editingObject = objects.find((item) => item.name === props.editing);
  const object = valuesFor(props, "save-address");
  return (
    <div className="space-y-8">
      <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
        <section aria-labelledby="objects-heading">
          <h2 id="objects-heading" className="mb-3 font-semibold">
            Address objects
          </h2>
          {objects.length === 0 ? (
            <EmptyState title="No address objects">Name the networks that rules, login sources and operator networks refer to.</EmptyState>
          ) : (
            <ElementTable
              props={props}
              items={objects}
              kind="address object"
              deleteIntent="delete-address"
              columns={[
                { header: "Name", cell: (item) => item.name, className: "font-mono font-medium" },
                { header: "Entries", cell: (item) => item.entries.join(", "), className: "font-mono text-xs" },
              ]}
            />
          )}
        </section>
        {props.canEdit ? (
          <EditorPanel title={editingObject ? `Edit address object ${editingObject.name}` : "Add an address object"} cancel={Boolean(editingObject)}>
            <EditorForm intent="save-address" baseRevision={props.baseRevision} className="space-y-4" label="Address object">
              <input type="hidden" name="original" value={editingObject?.name ?? ""} />
              <TextField label="Name" name="name" defaultValue={object.values.name ?? editingObject?.name} error={object.errors.name} maxLength={63} />
              <TextAreaField label="Entries" name="entries" defaultValue={listText(object.values, "entries", editingObject?.entries)} error={object.errors.entries} hint="One per line: a CIDR (198.51.100.0/24), an address (192.0.2.7) or a range (192.0.2.10-192.0.2.20)." />
              <SaveButton>{editingObject ? "Save address object" : "Add address object"}</SaveButton>
            </EditorForm>
          </EditorPanel>
        ) : null}
      </div>
      <GroupEditor
        props={props}
        heading="Address groups"
        kind="address group"
        groups={groups}
        intent="save-address-group"
        deleteIntent="delete-address-group"
        memberGroups={addressNameGroups(props.names)}
      />
      {props.names.sharedAddressObjects.length + props.names.sharedAddressGroups.length > 0 ? (
        <p className="text-sm text-ink-muted">
          Shared objects of the organisation can be used by name too: <NameHint label="shared" names={[...props.names.sharedAddressObjects, ...props.names.sharedAddressGroups]} />. A device object with the same name takes precedence.
        </p>
      ) : null}
    </div>
  );
}

function ServicesSection(props: SectionEditorProps) {
  const services = props.document.services;
  const groups = props.document.serviceGroups;
  const editingService = services.find((item) => item.name === props.editing);
  const service = valuesFor(props, "save-service");
  return (
    <div className="space-y-8">
      <p className="text-sm text-ink-muted">
        Built in: https tcp/443, http tcp/80, ssh tcp/22, telnet tcp/23 (login); ping (ICMP echo); snmp udp/161. Add a service here when a console moved, e.g. to tcp/8443.
      </p>
      <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
        <section aria-labelledby="services-heading">
          <h2 id="services-heading" className="mb-3 font-semibold">
            Custom services
          </h2>
          {services.length === 0 ? (
            <p className="text-sm text-ink-muted">No custom services.</p>
          ) : (
            <ElementTable
              props={props}
              items={services}
              kind="service"
              deleteIntent="delete-service"
              columns={[
                { header: "Name", cell: (item) => item.name, className: "font-mono font-medium" },
                { header: "Protocol/port", cell: (item) => `${item.protocol}/${item.port}`, className: "font-mono" },
                { header: "Kind", cell: (item) => item.kind },
              ]}
            />
          )}
        </section>
        {props.canEdit ? (
          <EditorPanel title={editingService ? `Edit service ${editingService.name}` : "Add a service"} cancel={Boolean(editingService)}>
            <EditorForm intent="save-service" baseRevision={props.baseRevision} className="space-y-4" label="Service">
              <input type="hidden" name="original" value={editingService?.name ?? ""} />
              <TextField label="Name" name="name" defaultValue={service.values.name ?? editingService?.name} error={service.errors.name} maxLength={63} />
              <div className="grid grid-cols-2 gap-3">
                <SelectField label="Protocol" name="protocol" defaultValue={service.values.protocol ?? editingService?.protocol ?? "tcp"} error={service.errors.protocol}>
                  <WordOptions words={PORT_PROTOCOLS} />
                </SelectField>
                <TextField label="Port" name="port" inputMode="numeric" defaultValue={service.values.port ?? editingService?.port?.toString()} error={service.errors.port} />
              </div>
              <SelectField label="Kind" name="kind" defaultValue={service.values.kind ?? editingService?.kind ?? "login"} error={service.errors.kind}>
                <LabelledOptions labels={SERVICE_KIND_LABELS} />
              </SelectField>
              <SaveButton>{editingService ? "Save service" : "Add service"}</SaveButton>
            </EditorForm>
          </EditorPanel>
        ) : null}
      </div>
      <GroupEditor
        props={props}
        heading="Service groups"
        kind="service group"
        groups={groups}
        intent="save-service-group"
        deleteIntent="delete-service-group"
        memberGroups={serviceNameGroups(props.names)}
      />
    </div>
  );
}

/** A list of groups (address or service) with its add/edit panel: the two work alike. */
function GroupEditor({ props, heading, kind, groups, intent, deleteIntent, memberGroups }: { props: SectionEditorProps; heading: string; kind: string; groups: Array<{ name: string; members: string[] }>; intent: string; deleteIntent: string; memberGroups: NameGroup[] }) {
  const editing = groups.find((item) => item.name === props.editing);
  const { values, errors } = valuesFor(props, intent);
  const headingId = `${intent}-heading`;
  // A group cannot contain itself: it is not offered as its own member.
  const offered = memberGroups.map((group) => ({ ...group, names: group.names.filter((name) => name !== editing?.name) }));
  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
      <section aria-labelledby={headingId}>
        <h2 id={headingId} className="mb-3 font-semibold">
          {heading}
        </h2>
        {groups.length === 0 ? (
          <p className="text-sm text-ink-muted">No {kind}s.</p>
        ) : (
          <ElementTable
            props={props}
            items={groups}
            kind={kind}
            deleteIntent={deleteIntent}
            columns={[
              { header: "Name", cell: (item) => item.name, className: "font-mono font-medium" },
              { header: "Members", cell: (item) => item.members.join(", "), className: "font-mono text-xs" },
            ]}
          />
        )}
      </section>
      {props.canEdit ? (
        <EditorPanel title={editing ? `Edit ${kind} ${editing.name}` : `Add an ${kind}`.replace("an service", "a service")} cancel={Boolean(editing)}>
          <EditorForm intent={intent} baseRevision={props.baseRevision} className="space-y-4" label={kind}>
            <input type="hidden" name="original" value={editing?.name ?? ""} />
            <TextField label="Name" name="name" defaultValue={values.name ?? editing?.name} error={errors.name} maxLength={63} />
            <NamePicker label="Members" name="members" groups={offered} defaultValue={pickedNames(props, intent, "members", editing?.members)} error={errors.members} />
            <SaveButton>{editing ? `Save ${kind}` : `Add ${kind}`}</SaveButton>
          </EditorForm>
        </EditorPanel>
      ) : null}
    </div>
  );
}

function windowsText(windows: ModelDocument["schedules"][number]["windows"] | undefined): string {
  return (windows ?? []).map((window) => `${window.days.join(" ")} ${window.start}-${window.end}`).join("\n");
}

function SchedulesSection(props: SectionEditorProps) {
  const items = props.document.schedules;
  const editing = items.find((item) => item.name === props.editing);
  const { values, errors } = valuesFor(props, "save-schedule");
  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
      {items.length === 0 ? (
        <EmptyState title="No schedules">Rules apply at all times (the built-in schedule “{ALL_WEEK_SCHEDULE}”) unless limited to a schedule, such as a support window.</EmptyState>
      ) : (
        <ElementTable
          props={props}
          items={items}
          kind="schedule"
          deleteIntent="delete-schedule"
          columns={[
            { header: "Schedule", cell: (item) => item.name, className: "font-mono font-medium" },
            { header: `Windows (${props.document.device.timezone})`, cell: (item) => windowsText(item.windows), className: "font-mono text-xs whitespace-pre-line" },
          ]}
        />
      )}
      {props.canEdit ? (
        <EditorPanel title={editing ? `Edit schedule ${editing.name}` : "Add a schedule"} cancel={Boolean(editing)}>
          <EditorForm intent="save-schedule" baseRevision={props.baseRevision} className="space-y-4" label="Schedule">
            <input type="hidden" name="original" value={editing?.name ?? ""} />
            <TextField label="Name" name="name" defaultValue={values.name ?? editing?.name} error={errors.name} maxLength={63} />
            <TextAreaField
              label="Windows"
              name="windows"
              defaultValue={"windows" in values ? values.windows : windowsText(editing?.windows)}
              error={errors.windows}
              hint={`One window per line: days, then start-end in the device's time zone (${props.document.device.timezone}), e.g. "mon tue wed thu fri 08:00-17:00". An end before the start runs past midnight.`}
            />
            <SaveButton>{editing ? "Save schedule" : "Add schedule"}</SaveButton>
          </EditorForm>
        </EditorPanel>
      ) : null}
    </div>
  );
}

function AccountsSection(props: SectionEditorProps) {
  const items = props.document.accounts;
  const editing = items.find((item) => item.name === props.editing);
  const { values, errors } = valuesFor(props, "save-account");
  const submitted = props.values.intent === "save-account";
  const loginServices = props.names.services.filter((service) => service.kind === "login");
  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
      <div className="space-y-4">
        <p className="rounded-control border border-warning/40 bg-warning-soft px-3 py-2 text-sm">
          Before restricting login sources on the device, keep a tested break-glass path: apply the restriction to a new account, test it, then retire the old one — following your change policy and the device maker's documentation.
        </p>
        {items.length === 0 ? (
          <EmptyState title="No accounts">Model the administrator accounts: named accounts, their login sources and second factor.</EmptyState>
        ) : (
          <ElementTable
            props={props}
            items={items}
            kind="account"
            deleteIntent="delete-account"
            columns={[
              {
                header: "Account",
                className: "font-mono font-medium",
                cell: (item) => (
                  <>
                    {item.name} {!item.enabled ? <Badge>disabled</Badge> : null} {item.accessLevel === "read-only" ? <Badge>read-only</Badge> : null}
                  </>
                ),
              },
              { header: "Login sources", className: "font-mono text-xs", cell: (item) => item.loginSources.join(", ") || <span className="font-sans text-danger">anywhere</span> },
              { header: "Second factor", cell: (item) => (item.secondFactor === "totp" ? <Badge tone="success">TOTP</Badge> : <Badge tone="danger">none</Badge>) },
              { header: "Services", className: "text-xs", cell: (item) => item.services.join(", ") || "all login services" },
            ]}
          />
        )}
      </div>
      {props.canEdit ? (
        <EditorPanel title={editing ? `Edit account ${editing.name}` : "Add an account"} cancel={Boolean(editing)}>
          <EditorForm intent="save-account" baseRevision={props.baseRevision} className="space-y-4" label="Account">
            <input type="hidden" name="original" value={editing?.name ?? ""} />
            <TextField label="Name" name="name" defaultValue={values.name ?? editing?.name} error={errors.name} maxLength={63} />
            <NamePicker
              label="Login sources"
              name="loginSources"
              groups={addressNameGroups(props.names)}
              literals
              defaultValue={pickedNames(props, "save-account", "loginSources", editing?.loginSources)}
              error={errors.loginSources}
              hint="Address objects and groups, or literal addresses, CIDRs and ranges; none means anywhere."
            />
            <SelectField label="Second factor" name="secondFactor" defaultValue={values.secondFactor ?? editing?.secondFactor ?? "totp"} error={errors.secondFactor}>
              <LabelledOptions labels={SECOND_FACTOR_LABELS} />
            </SelectField>
            <CheckboxGroup
              legend="Login services this account may use"
              name="services"
              options={loginServices.map((service) => ({ value: service.name, label: service.name }))}
              checked={checkedList(values, "services", editing?.services, submitted)}
              error={errors.services}
              hint="None ticked means every login service."
            />
            <SelectField label="Access level" name="accessLevel" defaultValue={values.accessLevel ?? editing?.accessLevel ?? "full"} error={errors.accessLevel}>
              <WordOptions words={ACCESS_LEVELS} />
            </SelectField>
            <label className="flex items-center gap-2 text-sm">
              <input type="checkbox" name="enabled" defaultChecked={submitted ? values.enabled === "on" : (editing?.enabled ?? true)} />
              Enabled
            </label>
            <SaveButton>{editing ? "Save account" : "Add account"}</SaveButton>
          </EditorForm>
        </EditorPanel>
      ) : null}
    </div>
  );
}

function OperatorNetworksSection(props: SectionEditorProps) {
  const { errors } = valuesFor(props, "save-operator-networks");
  const current = props.document.operatorNetworks;
  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_26rem]">
      <div className="space-y-3 text-sm">
        <p className="text-ink-muted">Where the team administers this device from. The lockout guard checks that each of these networks keeps a login path through every layer, at every time of the week.</p>
        {current.length === 0 ? <p>No operator networks declared.</p> : <ul className="list-disc pl-5 font-mono">{current.map((name) => <li key={name}>{name}</li>)}</ul>}
      </div>
      {props.canEdit ? (
        <EditorPanel title="Operator networks">
          <EditorForm intent="save-operator-networks" baseRevision={props.baseRevision} className="space-y-4" label="Operator networks">
            <NamePicker
              label="Address names"
              name="operatorNetworks"
              groups={addressNameGroups(props.names)}
              defaultValue={pickedNames(props, "save-operator-networks", "operatorNetworks", current)}
              error={errors.operatorNetworks}
            />
            <SaveButton>Save operator networks</SaveButton>
          </EditorForm>
        </EditorPanel>
      ) : null}
    </div>
  );
}

function SettingsSection(props: SectionEditorProps) {
  const { values, errors } = valuesFor(props, "save-settings");
  const removal = valuesFor(props, "delete-device");
  const device = props.document.device;
  return (
    <div className="space-y-6">
    <Card className="max-w-xl p-6">
      {props.canEdit ? (
        <EditorForm intent="save-settings" baseRevision={props.baseRevision} className="space-y-4" label="Device settings">
          <TextField label="Device name" name="name" defaultValue={values.name ?? device.name} error={errors.name} maxLength={63} />
          {props.draft ? (
            <input type="hidden" name="siteId" value={props.siteId} />
          ) : (
            <SelectField label="Site" name="siteId" defaultValue={values.siteId ?? props.siteId} error={errors.siteId}>
              {props.sites.map((site) => (
                <option key={site.id} value={site.id}>
                  {site.name}
                </option>
              ))}
            </SelectField>
          )}
          <TextField label="Time zone" name="timezone" defaultValue={values.timezone ?? device.timezone} error={errors.timezone} hint="IANA name, e.g. Europe/Amsterdam; schedules are read in it, daylight saving included." />
          <SelectField label="Default inbound action (no rule matched)" name="defaultInbound" defaultValue={values.defaultInbound ?? device.defaultInbound} error={errors.defaultInbound}>
            <LabelledOptions labels={DEFAULT_INBOUND_LABELS} />
          </SelectField>
          <SelectField label="Ports with no listener" name="unlistenedPort" defaultValue={values.unlistenedPort ?? device.unlistenedPort} error={errors.unlistenedPort}>
            <LabelledOptions labels={UNLISTENED_PORT_LABELS} />
          </SelectField>
          <SaveButton>Save settings</SaveButton>
        </EditorForm>
      ) : (
        <dl className="grid grid-cols-[12rem_1fr] gap-2 text-sm">
          <dt className="text-ink-muted">Time zone</dt>
          <dd>{device.timezone}</dd>
          <dt className="text-ink-muted">Default inbound</dt>
          <dd>{device.defaultInbound}</dd>
          <dt className="text-ink-muted">Ports with no listener</dt>
          <dd>{device.unlistenedPort}</dd>
        </dl>
      )}
    </Card>
    {props.canEdit && !props.draft ? (
      <Card className="max-w-xl border-danger/40 p-6">
        <h2 className="font-semibold text-danger">Delete this device</h2>
        <p className="mt-1 text-sm text-ink-muted">Removes the device and every revision of it from Sallyport (the audit log keeps a record). The real device is not touched.</p>
        <EditorForm intent="delete-device" baseRevision={props.baseRevision} className="mt-4 space-y-3" label="Delete device">
          <TextField label={`Type ${device.name} to confirm`} name="confirmName" defaultValue={removal.values.confirmName} error={removal.errors.confirmName} autoComplete="off" />
          {props.deleteNeedsReason ? (
            <TextAreaField
              label="Why delete it now, outside a proposal (break-glass)"
              name="breakGlassReason"
              rows={2}
              defaultValue={removal.values.breakGlassReason}
              error={removal.errors.breakGlassReason}
              hint={`Changes go through proposals in this organisation, and a deletion cannot be proposed: as an admin you may delete it with a reason of at least ${WRITTEN_REASON_MIN} characters, recorded in the audit log.`}
            />
          ) : null}
          <button type="submit" className="inline-flex h-10 items-center rounded-control bg-danger px-4 text-sm font-medium text-white dark:text-black">
            Delete device
          </button>
        </EditorForm>
      </Card>
    ) : null}
    </div>
  );
}
