import { NavLink } from "react-router";
import { DEVICE_SECTIONS, SECTION_TITLES } from "#app/components/device/sections";
import { cx } from "#app/components/ui/cx";

/** A scenario's tabs: its overview, then the device editor's sections (also a drill's answer model and a trainee's sandbox copy, with their own way back). */
export function ScenarioNav({ scenarioPath, overview = { path: scenarioPath, label: "Overview" }, label = "Scenario sections" }: { scenarioPath: string; overview?: { path: string; label: string }; label?: string }) {
  const tab = ({ isActive }: { isActive: boolean }) => cx("-mb-px border-b-2 px-2 py-2 text-sm font-medium whitespace-nowrap", isActive ? "border-brass text-brass" : "border-transparent text-ink-muted hover:text-ink");
  return (
    <nav aria-label={label} className="mb-5 flex flex-wrap gap-1 border-b border-line">
      <NavLink to={overview.path} end className={tab}>
        {overview.label}
      </NavLink>
      {DEVICE_SECTIONS.map((section) => (
        <NavLink key={section} to={`${scenarioPath}/model/${section}`} className={tab}>
          {SECTION_TITLES[section]}
        </NavLink>
      ))}
    </nav>
  );
}

/** The banner of every scenario page: it is for teaching, apart from the fleet. */
export function ScenarioBanner({ title, deviceName, trainingPath }: { title: string; deviceName: string; trainingPath: string }) {
  return (
    <div role="note" className="mb-4 rounded-card border-2 border-dashed border-harbour/50 bg-harbour-soft p-4">
      <p className="font-semibold text-harbour">Teaching scenario — not a fleet device</p>
      <p className="mt-1 text-sm">
        <span className="font-medium">{title}</span> (<span className="font-mono">{deviceName}</span>) lives in{" "}
        <NavLink to={trainingPath} className="text-harbour underline underline-offset-4">
          Training
        </NavLink>
        : it is never counted in the fleet, its findings or its changes.
      </p>
    </div>
  );
}
