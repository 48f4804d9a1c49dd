import Markdown from "react-markdown";
import { cx } from "./ui/cx";

// Trainers' notes and summaries are Markdown written by members: rendered by react-markdown,
// which builds React elements (never innerHTML). Raw HTML in the text is dropped (`skipHtml`),
// URLs pass its default transform (no javascript: links), and images are not shown.
const ALLOWED = ["p", "em", "strong", "code", "pre", "ul", "ol", "li", "a", "blockquote", "br", "del", "h3", "h4", "hr"];

/** Markdown text as safe React elements, in the product's type scale. */
export function MarkdownText({ children, className }: { children: string; className?: string }) {
  return (
    <div className={cx("space-y-2 [&_a]:text-harbour [&_a]:underline [&_code]:rounded [&_code]:bg-surface-sunken [&_code]:px-1 [&_code]:font-mono [&_ol]:list-decimal [&_ol]:pl-5 [&_ul]:list-disc [&_ul]:pl-5", className)}>
      <Markdown skipHtml allowedElements={ALLOWED} unwrapDisallowed>
        {children}
      </Markdown>
    </div>
  );
}
