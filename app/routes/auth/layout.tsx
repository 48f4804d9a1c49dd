import { Link, Outlet } from "react-router";
import { BrandMark } from "#app/components/brand";

/** The signed-out pages: one centred card beside a short statement of what Sallyport does. */
export default function AuthLayout() {
  return (
    <div className="grid min-h-screen lg:grid-cols-[1fr_minmax(0,34rem)]">
      <aside className="relative hidden overflow-hidden bg-harbour text-on-harbour lg:flex lg:flex-col lg:justify-between lg:p-12">
        <Link to="/" className="flex items-center gap-3 text-lg font-semibold">
          <BrandMark className="size-9" />
          Sallyport
        </Link>
        <div className="max-w-md">
          <p className="text-3xl leading-tight font-semibold">Know who can reach each device's management plane — before a scanner does.</p>
          <p className="mt-4 text-on-harbour/80">
            Model listeners, accounts, login sources, second factors and inbound rules; trace a probe through every layer; review changes by their effect.
          </p>
        </div>
        <p className="text-sm text-on-harbour/80">The simulation models the configuration, not the device: confirm on the device in a maintenance window.</p>
        <svg aria-hidden="true" className="pointer-events-none absolute -right-24 -bottom-24 size-96 opacity-10" viewBox="0 0 100 100">
          <path d="M10 100V45a40 40 0 0 1 80 0v55" stroke="currentColor" strokeWidth="8" fill="none" />
        </svg>
      </aside>
      <main className="flex items-center justify-center px-6 py-12">
        <div className="w-full max-w-sm">
          <Link to="/" className="mb-8 flex items-center gap-2 text-harbour lg:hidden">
            <BrandMark className="size-8" />
            <span className="text-lg font-semibold">Sallyport</span>
          </Link>
          <Outlet />
        </div>
      </main>
    </div>
  );
}
