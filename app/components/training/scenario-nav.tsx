import { NavLink } from "react-router";
import { DEVICE_SECTIONS, SECTION_TITLES } from "#app/components/device/sections";
import { cx } from "#app/components/ui/cx";

/** A scenario's tabs: its overview, then the device editor's sections. */
export function ScenarioNav({ scenarioPath }: { scenarioPath: string }) {
  const tab = ({ isActive }: { isActive: boolean }) => cx("-mb-px border-b-2 px-2 py-2 text-sm font-medium whitespace-nowrap", isActive ? "border-brass text-brass" : "border-transparent text-ink-muted hover:text-ink");
  return (
    <nav aria-label="Scenario sections" className="mb-5 flex flex-wrap gap-1 border-b border-line">
      <NavLink to={scenarioPath} end className={tab}>
        Overview
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
