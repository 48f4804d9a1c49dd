import type { HTMLAttributes, TdHTMLAttributes, ThHTMLAttributes } from "react";
import { cx } from "./cx";
import { ScrollArea } from "./scroll-area";

/**
 * On a phone a column keeps at least 7rem, so a wide table scrolls inside its card with rows of
 * a few lines, instead of squeezing every column to one word per line and still overflowing.
 * A column of running text asks for more with an important class (`max-sm:min-w-56!`).
 */
const PHONE_COLUMNS = "max-sm:[&_td]:min-w-28 max-sm:[&_th]:min-w-28 max-sm:[&_td]:px-3 max-sm:[&_th]:px-3";

export function Table({ className, ...props }: HTMLAttributes<HTMLTableElement>) {
  return (
    <ScrollArea className="rounded-card border border-line bg-surface shadow-card">
      <table className={cx("w-full border-collapse text-sm", PHONE_COLUMNS, className)} {...props} />
    </ScrollArea>
  );
}

export function Th({ className, ...props }: ThHTMLAttributes<HTMLTableCellElement>) {
  return <th scope="col" className={cx("border-b border-line bg-surface-sunken px-4 py-2.5 text-left text-xs font-semibold tracking-wide text-ink-muted uppercase", className)} {...props} />;
}

export function Td({ className, ...props }: TdHTMLAttributes<HTMLTableCellElement>) {
  return <td className={cx("border-b border-line px-4 py-3 align-middle text-ink", className)} {...props} />;
}
