import type { HTMLAttributes, TdHTMLAttributes, ThHTMLAttributes } from "react";
import { cx } from "./cx";
import { ScrollArea } from "./scroll-area";

export function Table({ className, ...props }: HTMLAttributes<HTMLTableElement>) {
  return (
    <ScrollArea className="rounded-card border border-line bg-surface shadow-card">
      <table className={cx("w-full border-collapse text-sm", className)} {...props} />
    </ScrollArea>
  );
}

export function Th({ className, ...props }: ThHTMLAttributes<HTMLTableCellElement>) {
  return <th scope="col" className={cx("border-b border-line bg-surface-sunken px-4 py-2.5 text-left text-xs font-semibold tracking-wide text-ink-muted uppercase", className)} {...props} />;
}

export function Td({ className, ...props }: TdHTMLAttributes<HTMLTableCellElement>) {
  return <td className={cx("border-b border-line px-4 py-3 align-middle text-ink", className)} {...props} />;
}
