import { Link } from "react-router";
import { ELEMENT_KINDS } from "#server/engine/vocabulary";
import { SECTION_OF_ELEMENT } from "./sections";

/** The editor address of an element named "kind:name" in findings and traces. */
export function elementEditorPath(devicePath: string, element: string): string | null {
  const separator = element.indexOf(":");
  const kind = ELEMENT_KINDS.find((candidate) => candidate === element.slice(0, separator));
  if (!kind) return null;
  const section = SECTION_OF_ELEMENT[kind];
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
