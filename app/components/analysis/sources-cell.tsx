import { pluralWord } from "#server/engine/format";
import { Count } from "./common";

/** How many CIDRs of a group a table cell lists before "and N more" (the CSV and the JSON list them all). */
const SHOWN = 3;

/** A group of sources in a table cell: its first CIDRs, how many more, and its address count. */
export function SourcesCell({ sources, count }: { sources: readonly string[]; count: string }) {
  const more = sources.length - SHOWN;
  return (
    <div className="text-xs">
      <ul className="font-mono">
        {sources.slice(0, SHOWN).map((cidr) => (
          <li key={cidr}>{cidr}</li>
        ))}
      </ul>
      <p className="text-ink-muted">
        {more > 0 ? <span title={sources.slice(SHOWN).join(" ")}>and {more} more · </span> : null}
        <Count value={count} /> {pluralWord(BigInt(count), { one: "address", other: "addresses" })}
      </p>
    </div>
  );
}
