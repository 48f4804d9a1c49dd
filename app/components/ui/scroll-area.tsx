import { useEffect, useRef, useState, type HTMLAttributes } from "react";
import { cx } from "./cx";

/** The name a scrolling region takes: its table's caption or label, else the nearest heading before it. */
function regionName(element: HTMLElement): string {
  const table = element.querySelector("table");
  const own = table?.getAttribute("aria-label") ?? table?.querySelector("caption")?.textContent ?? element.querySelector("figcaption")?.textContent;
  if (own?.trim()) return own.trim();
  for (let node: Element | null = element; node && node !== document.body; node = node.parentElement) {
    const labelledBy = node.getAttribute("aria-labelledby");
    const heading = labelledBy ? document.getElementById(labelledBy.split(" ")[0]) : null;
    if (heading?.textContent?.trim()) return heading.textContent.trim();
  }
  return "Table";
}

/**
 * A box whose content may be wider than the screen (a table on a phone): it scrolls sideways
 * inside itself, so the page never does. While it scrolls it becomes a named, focusable region,
 * so it can be scrolled with the keyboard too (WCAG 2.1.1; axe "scrollable-region-focusable").
 * `relative` keeps absolutely placed content (visually hidden labels) inside the box.
 */
export function ScrollArea({ className, children, ...props }: HTMLAttributes<HTMLDivElement>) {
  const ref = useRef<HTMLDivElement>(null);
  const [scrolling, setScrolling] = useState<string | null>(null);
  useEffect(() => {
    const element = ref.current;
    if (!element) return;
    const measure = () => setScrolling(element.scrollWidth > element.clientWidth + 1 ? `${regionName(element)} (scrolls sideways)` : null);
    measure();
    const observer = new ResizeObserver(measure);
    observer.observe(element);
    if (element.firstElementChild) observer.observe(element.firstElementChild);
    return () => observer.disconnect();
  }, []);
  return (
    <div
      ref={ref}
      className={cx("relative overflow-x-auto", className)}
      {...(scrolling ? { role: "region", "aria-label": scrolling, tabIndex: 0 } : {})}
      {...props}
    >
      {children}
    </div>
  );
}
