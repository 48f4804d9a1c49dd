import { Link } from "react-router";

const SECTION_OF: Record<string, string> = {
  account: "accounts",
  address: "addresses",
  "address-group": "addresses",
  interface: "interfaces",
  "operator-network": "operator-networks",
  rule: "rules",
  schedule: "schedules",
  service: "services",
  "service-group": "services",
};

/** The editor address of an element named "kind:name" in findings and traces. */
export function elementEditorPath(devicePath: string, element: string): string | null {
  const separator = element.indexOf(":");
  const section = SECTION_OF[element.slice(0, separator)];
  if (!section) return null;
  const name = element.slice(separator + 1);
  return `${devicePath}/model/${section}?edit=${encodeURIComponent(name)}#edit`;
}

export function ElementLink({ devicePath, element }: { devicePath: string; element: string }) {
  const path = elementEditorPath(devicePath, element);
  const label = element.replace(":", " ");
  if (!path) return <code>{label}</code>;
  return (
    <Link to={path} className="font-mono text-xs text-harbour underline underline-offset-2">
      {label}
    </Link>
  );
}
