import { redirect } from "react-router";
import type { Route } from "./+types/logout";
import { endAllSessions, endSession } from "#server/auth/session.server";
import { signedInOf } from "#server/auth/guard.server";
import { serializeFlash } from "#server/auth/flash.server";
import { readForm } from "#server/http/form.server";
import { recordAuditEvent } from "#server/services/audit.server";
import { clientAddressOf } from "#server/http/request-context.server";

// Sign-out is a POST only, so a link or an image on another page cannot sign anyone out.
export async function loader() {
  throw redirect("/");
}

export async function action({ request, context }: Route.ActionArgs) {
  // A POST without a body (or with one that is not a form) still signs out: this session only.
  const form = request.headers.get("Content-Type") ? await readForm(request.clone()).catch(() => null) : null;
  const signedIn = signedInOf(context);
  const everywhere = form?.get("scope") === "everywhere";
  if (signedIn && everywhere) {
    await endAllSessions(signedIn.user.id);
    await recordAuditEvent({ userId: signedIn.user.id, email: signedIn.user.email, clientAddress: clientAddressOf(context) }, { organisationId: null, action: "user.signed-out-everywhere", targetType: "user", targetId: signedIn.user.id });
  }
  const headers = new Headers();
  headers.append("Set-Cookie", await endSession(request));
  headers.append("Set-Cookie", await serializeFlash({ kind: "info", message: everywhere ? "Signed out on every device." : "Signed out." }));
  throw redirect("/login", { headers });
}
