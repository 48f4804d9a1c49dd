// A multi-select combobox for lists of element names (rule sources, destinations and services,
// group members, login sources, operator networks), built on React Aria Components: the names
// the field takes, grouped by kind, filtered as one types; chosen names as removable tags.
// Progressive enhancement: the server renders a plain text area (one name per line), which
// works without JavaScript; after hydration the picker replaces it and submits one hidden input
// per chosen name under the same field name, which the action reads exactly as it reads the
// text area's lines.
import { useContext, useId, useState, type KeyboardEvent, type ReactNode } from "react";
import { useHydrated } from "#app/components/use-hydrated";
import {
  Button,
  ComboBox,
  ComboBoxStateContext,
  Header,
  Input,
  Label,
  ListBox,
  ListBoxItem,
  ListBoxSection,
  Popover,
  Tag,
  TagGroup,
  TagList,
  type Key,
} from "react-aria-components";
import { looksLikeAddressEntry } from "#server/engine/vocabulary";
import { cx } from "../ui/cx";
import { FieldNotes } from "../ui/field";
import { TextAreaField } from "./editor-kit";

/** One kind of name the field takes, e.g. "Address objects" with their names. */
export type NameGroup = { label: string; names: readonly string[] };

export type NamePickerProps = {
  label: string;
  /** The form field: each chosen name is submitted as one value under it. */
  name: string;
  groups: readonly NameGroup[];
  /** What the form shows first: the element's names, or what the user submitted. */
  defaultValue: readonly string[];
  error?: string;
  hint?: ReactNode;
  /** Whether literal addresses, CIDRs and ranges may be typed (login sources, PRODUCT.md §3). */
  literals?: boolean;
  /** Rows of the text area rendered before hydration and without JavaScript. */
  rows?: number;
};

export function NamePicker(props: NamePickerProps) {
  const hydrated = useHydrated();
  // Keyed by the starting names: another element opened for editing, or a refused submission
  // coming back, starts the picker afresh from those names.
  return hydrated ? <Picker key={props.defaultValue.join("\n")} {...props} /> : <PlainNames {...props} />;
}


/** Without JavaScript (and until hydration): the names one per line, as the action reads them. */
function PlainNames({ label, name, defaultValue, error, hint, rows = 3 }: NamePickerProps) {
  return <TextAreaField label={label} name={name} rows={rows} defaultValue={defaultValue.join("\n")} error={error} hint={hint} />;
}

const itemClasses = ({ isFocused, isSelected }: { isFocused: boolean; isSelected: boolean }) =>
  cx("flex cursor-default items-center gap-2 rounded px-2 py-1.5 font-mono text-sm outline-none", isFocused && "bg-harbour-soft", isSelected && "font-semibold");

/** Chosen entries the groups do not offer, listed so they show as chosen and can be unchosen. */
function ChosenSection({ label, names, tone = "muted" }: { label: string; names: readonly string[]; tone?: "muted" | "danger" }) {
  if (names.length === 0) return null;
  return (
    <ListBoxSection>
      <Header className={cx("px-2 pt-2 pb-1 text-xs font-semibold tracking-wide uppercase", tone === "danger" ? "text-danger" : "text-ink-muted")}>{label}</Header>
      {names.map((item) => (
        <Option key={item} id={item} />
      ))}
    </ListBoxSection>
  );
}

function Option({ id, children }: { id: string; children?: ReactNode }) {
  return (
    <ListBoxItem id={id} textValue={id} className={itemClasses}>
      {({ isSelected }) => (
        <>
          <span aria-hidden="true" className="inline-block w-4 text-harbour">
            {isSelected ? "✓" : ""}
          </span>
          {children ?? id}
        </>
      )}
    </ListBoxItem>
  );
}

/**
 * The text box. Enter with no option highlighted takes the typed text when it is an offered
 * name (in any case) or, where allowed, a literal entry; other text stays in the box, and the
 * form is not submitted from a half-typed name.
 */
function PickerInput({ placeholder, accept }: { placeholder: string; accept: (text: string) => void }) {
  const state = useContext(ComboBoxStateContext);
  const onKeyDownCapture = (event: KeyboardEvent<HTMLInputElement>) => {
    if (event.key !== "Enter" || state === null || state.selectionManager.focusedKey !== null) return;
    const text = event.currentTarget.value.trim();
    if (text === "") return;
    event.preventDefault();
    event.stopPropagation();
    // The list stays as it is, as after choosing an option: open for the next name, Escape closes it.
    accept(text);
  };
  return (
    <Input
      onKeyDownCapture={onKeyDownCapture}
      className="h-10 min-w-0 flex-1 rounded-l-control bg-transparent px-3 font-mono text-sm outline-none placeholder:font-sans placeholder:text-ink-faint"
      placeholder={placeholder}
    />
  );
}

function Picker({ label, name, groups, defaultValue, error, hint, literals = false }: NamePickerProps) {
  const id = useId();
  const [chosen, setChosen] = useState<string[]>(() => [...new Set(defaultValue)]);
  const [typed, setTyped] = useState("");
  // Each name once, in the first group that has it: an option id must be unique in the list.
  const offered = new Set<string>();
  const sections = groups.map((group) => {
    const names: string[] = [];
    for (const item of group.names) {
      if (offered.has(item)) continue;
      offered.add(item);
      names.push(item);
    }
    return { label: group.label, names };
  });
  const isLiteral = (text: string) => literals && looksLikeAddressEntry(text);
  // Chosen entries the lists do not offer: literal entries, and names that do not exist (typed
  // without JavaScript, or kept from a refused submission) so they can be seen and removed.
  const chosenLiterals = chosen.filter((item) => !offered.has(item) && isLiteral(item));
  const chosenUnknown = chosen.filter((item) => !offered.has(item) && !isLiteral(item));
  const text = typed.trim();
  const newLiteral = text !== "" && isLiteral(text) && !chosen.includes(text) ? text : null;
  const describedBy = [`${id}-hint`, error ? `${id}-error` : ""].join(" ").trim();
  const choose = (keys: readonly Key[]) => {
    setChosen(keys.map(String));
    setTyped("");
  };
  const remove = (keys: Set<Key>) => setChosen((current) => current.filter((item) => !keys.has(item)));
  /** Typed text taken on Enter: an offered name (matched without regard to case) or an allowed literal. */
  const accept = (text: string) => {
    const folded = text.toLowerCase();
    const match = offered.has(text) ? text : [...offered].find((item) => item.toLowerCase() === folded);
    const item = match ?? (isLiteral(text) ? text : null);
    if (item === null) return;
    setChosen((current) => (current.includes(item) ? current : [...current, item]));
    setTyped("");
  };

  return (
    <div className="space-y-1.5">
      <ComboBox
        selectionMode="multiple"
        value={chosen}
        onChange={choose}
        inputValue={typed}
        onInputChange={setTyped}
        allowsEmptyCollection
        aria-describedby={describedBy}
        isInvalid={Boolean(error)}
        className="space-y-1.5"
      >
        <Label className="block text-sm font-medium">{label}</Label>
        <div className={cx("flex rounded-control border bg-surface shadow-card focus-within:ring-2 focus-within:ring-brass/60", error ? "border-danger" : "border-line-strong")}>
          <PickerInput placeholder={literals ? "Type a name or an address…" : "Type to filter…"} accept={accept} />
          <Button aria-label={`Show the ${label.toLowerCase()} to choose from`} className="px-3 text-ink-muted hover:text-ink">
            <span aria-hidden="true">▾</span>
          </Button>
        </div>
        <Popover className="max-h-72 w-(--trigger-width) overflow-auto rounded-control border border-line bg-surface-raised p-1 shadow-overlay">
          <ListBox className="outline-none" renderEmptyState={() => <p className="px-2 py-1.5 text-sm text-ink-muted">{literals ? "No name matches; an address, CIDR or range can be typed." : "No name matches."}</p>}>
            {newLiteral ? (
              // Keyed by the text: an option's id never changes, a new text is a new option.
              <ListBoxSection key={`literal:${newLiteral}`}>
                <Header className="px-2 pt-2 pb-1 text-xs font-semibold tracking-wide text-ink-muted uppercase">Literal entry</Header>
                <Option key={newLiteral} id={newLiteral}>
                  <span>
                    Add <strong>{newLiteral}</strong>
                  </span>
                </Option>
              </ListBoxSection>
            ) : null}
            {sections
              .filter((group) => group.names.length > 0)
              .map((group) => (
                <ListBoxSection key={group.label}>
                  <Header className="px-2 pt-2 pb-1 text-xs font-semibold tracking-wide text-ink-muted uppercase">{group.label}</Header>
                  {group.names.map((item) => (
                    <Option key={item} id={item} />
                  ))}
                </ListBoxSection>
              ))}
            <ChosenSection label="Literal entries" names={chosenLiterals} />
            <ChosenSection label="Not found" names={chosenUnknown} tone="danger" />
          </ListBox>
        </Popover>
      </ComboBox>
      {chosen.length > 0 ? (
        <TagGroup aria-label={`Chosen ${label.toLowerCase()}`} onRemove={remove}>
          <TagList className="flex flex-wrap gap-1.5">
            {chosen.map((item) => (
              <Tag
                key={item}
                id={item}
                textValue={item}
                className={({ isFocusVisible }) =>
                  cx(
                    "inline-flex items-center gap-0.5 rounded-control border pl-2 font-mono text-xs outline-none",
                    chosenUnknown.includes(item) ? "border-danger bg-danger-soft text-danger" : "border-line bg-harbour-soft text-ink",
                    isFocusVisible && "ring-2 ring-brass",
                  )
                }
              >
                {item}
                <Button slot="remove" aria-label={`Remove ${item}`} className="inline-flex h-6 w-6 items-center justify-center rounded text-ink-muted hover:bg-surface hover:text-ink">
                  <span aria-hidden="true">×</span>
                </Button>
              </Tag>
            ))}
          </TagList>
        </TagGroup>
      ) : null}
      {chosen.map((item) => (
        <input key={item} type="hidden" name={name} value={item} />
      ))}
      <FieldNotes id={id} hint={<>{hint} Type a name{literals ? " or an address" : ""} and press Enter, or ↓ to open the list; Delete removes a focused tag.</>} error={error} />
    </div>
  );
}
