import type { ReactNode } from "react";
import { Form, Link, NavLink, useLocation } from "react-router";
import { BrandMark } from "./brand";
import { cx } from "./ui/cx";

export type ShellOrganisation = { slug: string; name: string; role: string };
export type ShellUser = { name: string; email: string };

const NAVIGATION = [
  { to: "devices", label: "Devices", icon: "M4 6h16v5H4zM4 13h16v5H4zM7 8.5h.01M7 15.5h.01" },
  { to: "sites", label: "Sites", icon: "M12 21s-7-6.2-7-11.5A7 7 0 0 1 19 9.5C19 14.8 12 21 12 21zM12 12a2.5 2.5 0 1 0 0-5 2.5 2.5 0 0 0 0 5z" },
  { to: "findings", label: "Findings", icon: "M12 3l9 16H3zM12 10v4M12 17h.01" },
  { to: "training", label: "Training", icon: "M3 8l9-4 9 4-9 4zM7 10v5c0 1.5 2.2 3 5 3s5-1.5 5-3v-5" },
  { to: "settings", label: "Settings", icon: "M12 15a3 3 0 1 0 0-6 3 3 0 0 0 0 6zM19 12a7 7 0 0 0-.1-1.2l2-1.6-2-3.4-2.4 1a7 7 0 0 0-2-1.2L14 3h-4l-.5 2.6a7 7 0 0 0-2 1.2l-2.4-1-2 3.4 2 1.6a7 7 0 0 0 0 2.4l-2 1.6 2 3.4 2.4-1a7 7 0 0 0 2 1.2L10 21h4l.5-2.6a7 7 0 0 0 2-1.2l2.4 1 2-3.4-2-1.6c.1-.4.1-.8.1-1.2z" },
] as const;

function Icon({ path, className }: { path: string; className?: string }) {
  return (
    <svg viewBox="0 0 24 24" className={cx("size-5 shrink-0", className)} fill="none" stroke="currentColor" strokeWidth="1.7" strokeLinecap="round" strokeLinejoin="round" aria-hidden="true">
      <path d={path} />
    </svg>
  );
}

/** The signed-in frame: navigation on the left; organisation switcher and user menu on top. */
export function AppShell({ organisation, organisations, user, theme, children }: { organisation: ShellOrganisation; organisations: ShellOrganisation[]; user: ShellUser; theme: string; children: ReactNode }) {
  const location = useLocation();
  return (
    <div className="flex min-h-screen">
      <a href="#main" className="sr-only focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:z-50 focus:rounded-control focus:bg-surface focus:px-3 focus:py-2">
        Skip to content
      </a>
      <nav aria-label="Main" className="sticky top-0 flex h-screen w-56 shrink-0 flex-col border-r border-line bg-surface px-3 py-4 max-md:w-16">
        <Link to={`/o/${organisation.slug}`} className="mb-6 flex items-center gap-2 px-2 text-harbour">
          <BrandMark className="size-8 shrink-0" />
          <span className="text-lg font-semibold tracking-tight max-md:hidden">Sallyport</span>
        </Link>
        <ul className="space-y-1">
          {NAVIGATION.map((item) => (
            <li key={item.to}>
              <NavLink
                to={`/o/${organisation.slug}/${item.to}`}
                className={({ isActive }) =>
                  cx("flex items-center gap-3 rounded-control px-2.5 py-2 text-sm font-medium", isActive ? "bg-harbour-soft text-harbour" : "text-ink-muted hover:bg-surface-sunken hover:text-ink")
                }
              >
                <Icon path={item.icon} />
                <span className="max-md:sr-only">{item.label}</span>
              </NavLink>
            </li>
          ))}
        </ul>
      </nav>
      <div className="flex min-w-0 flex-1 flex-col">
        <header className="flex h-14 items-center justify-between gap-4 border-b border-line bg-surface px-6">
          {/* Keyed by the path so a menu closes once one of its links has been followed. */}
          <details key={`organisations ${location.pathname}`} className="group relative">
            <summary className="flex cursor-pointer list-none items-center gap-2 rounded-control px-2 py-1.5 text-sm font-semibold hover:bg-surface-sunken" aria-label={`Organisation: ${organisation.name}. Switch organisation`}>
              <span className="grid size-6 place-items-center rounded-md bg-brass-soft text-xs font-bold text-brass" aria-hidden="true">
                {organisation.name.slice(0, 1).toUpperCase()}
              </span>
              {organisation.name}
              <span className="text-xs font-normal text-ink-faint">({organisation.role})</span>
              <Icon path="M6 9l6 6 6-6" className="size-4 text-ink-faint" />
            </summary>
            <div className="absolute left-0 z-30 mt-2 w-72 rounded-card border border-line bg-surface-raised p-2 shadow-overlay">
              <p className="px-2 pb-1 text-xs font-semibold tracking-wide text-ink-faint uppercase">Your organisations</p>
              <ul>
                {organisations.map((candidate) => (
                  <li key={candidate.slug}>
                    <Link
                      to={`/o/${candidate.slug}`}
                      aria-current={candidate.slug === organisation.slug ? "true" : undefined}
                      className="flex items-center justify-between rounded-control px-2 py-2 text-sm hover:bg-surface-sunken aria-[current]:font-semibold"
                    >
                      {candidate.name}
                      <span className="text-xs text-ink-faint">{candidate.role}</span>
                    </Link>
                  </li>
                ))}
              </ul>
            </div>
          </details>
          <details key={`account ${location.pathname}`} className="relative">
            <summary className="flex cursor-pointer list-none items-center gap-2 rounded-control px-2 py-1.5 text-sm hover:bg-surface-sunken" aria-label={`Account menu for ${user.name}`}>
              <span className="grid size-7 place-items-center rounded-full bg-harbour text-xs font-semibold text-on-harbour" aria-hidden="true">
                {user.name
                  .split(/\s+/)
                  .map((part) => part[0])
                  .slice(0, 2)
                  .join("")
                  .toUpperCase()}
              </span>
              <span className="max-sm:hidden">{user.name}</span>
            </summary>
            <div className="absolute right-0 z-30 mt-2 w-72 rounded-card border border-line bg-surface-raised p-2 shadow-overlay">
              <p className="px-2 py-1 text-sm font-medium">{user.name}</p>
              <p className="px-2 pb-2 text-xs break-all text-ink-muted">{user.email}</p>
              <Link to={`/o/${organisation.slug}/account`} className="block rounded-control px-2 py-2 text-sm hover:bg-surface-sunken">
                Your account
              </Link>
              <Form method="post" action="/theme" className="flex items-center gap-1 px-2 py-2" aria-label="Theme">
                <input type="hidden" name="returnTo" value={location.pathname + location.search} />
                {["system", "light", "dark"].map((option) => (
                  <button
                    key={option}
                    type="submit"
                    name="theme"
                    value={option}
                    aria-pressed={theme === option}
                    className="flex-1 rounded-md border border-line px-2 py-1 text-xs capitalize aria-pressed:border-harbour aria-pressed:bg-harbour-soft aria-pressed:text-harbour"
                  >
                    {option}
                  </button>
                ))}
              </Form>
              <Form method="post" action="/logout" className="border-t border-line pt-1">
                <button type="submit" className="block w-full rounded-control px-2 py-2 text-left text-sm hover:bg-surface-sunken">
                  Sign out
                </button>
              </Form>
            </div>
          </details>
        </header>
        <main id="main" className="mx-auto w-full max-w-6xl flex-1 px-6 py-8">
          {children}
        </main>
      </div>
    </div>
  );
}
