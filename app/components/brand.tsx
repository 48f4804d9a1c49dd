import { Link } from "react-router";
import { cx } from "./ui/cx";

/** The Sallyport mark: a gate arch in a wall, open at the foot. */
export function BrandMark({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true" fill="none">
      <rect x="2" y="6" width="28" height="22" rx="3" fill="currentColor" opacity="0.16" />
      <path d="M2 9a3 3 0 0 1 3-3h22a3 3 0 0 1 3 3v19H2z" stroke="currentColor" strokeWidth="2" />
      <path d="M11 28V18a5 5 0 0 1 10 0v10" stroke="currentColor" strokeWidth="2.4" strokeLinecap="round" />
      <path d="M7 6V3M13 6V3M19 6V3M25 6V3" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
    </svg>
  );
}

/** The mark and the name, linking home: the top of the pages outside the app shell. */
export function BrandHomeLink({ className }: { className?: string }) {
  return (
    <Link to="/" className={cx("flex items-center gap-2 text-harbour", className)}>
      <BrandMark className="size-7" />
      <span className="font-semibold">Sallyport</span>
    </Link>
  );
}
