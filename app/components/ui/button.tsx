import type { ButtonHTMLAttributes } from "react";
import { Link, type LinkProps } from "react-router";
import { cx } from "./cx";

type Variant = "primary" | "secondary" | "ghost" | "danger" | "ghost-danger";
type Size = "sm" | "md";

const base =
  "inline-flex items-center justify-center gap-2 rounded-control font-medium transition-colors disabled:opacity-50 disabled:cursor-not-allowed whitespace-nowrap";
const variants: Record<Variant, string> = {
  primary: "bg-harbour text-on-harbour hover:bg-harbour-strong shadow-card",
  secondary: "bg-surface text-ink border border-line-strong hover:bg-surface-sunken",
  ghost: "text-ink-muted hover:text-ink hover:bg-surface-sunken",
  danger: "bg-danger text-white hover:opacity-90 dark:text-black",
  "ghost-danger": "text-danger hover:bg-danger-soft",
};
const sizes: Record<Size, string> = { sm: "h-8 px-3 text-sm", md: "h-10 px-4 text-sm" };

export function buttonClasses(variant: Variant = "primary", size: Size = "md"): string {
  return cx(base, variants[variant], sizes[size]);
}

export function Button({ variant = "primary", size = "md", className, type = "button", ...props }: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: Variant; size?: Size }) {
  return <button type={type} className={cx(buttonClasses(variant, size), className)} {...props} />;
}

export function ButtonLink({ variant = "primary", size = "md", className, ...props }: LinkProps & { variant?: Variant; size?: Size }) {
  return <Link className={cx(buttonClasses(variant, size), className)} {...props} />;
}
