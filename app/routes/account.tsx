import { Form, Link } from "react-router";
import type { Route } from "./+types/account";
import { Session } from "#models/index";
import { requireSignedIn } from "#server/auth/guard.server";
import { listOrganisationsOfUser } from "#server/services/organisations.server";
import { BrandMark } from "#app/components/brand";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { Table, Td, Th } from "#app/components/ui/table";

export const meta: Route.MetaFunction = () => [{ title: "Account · Sallyport" }];

export async function loader({ request, context }: Route.LoaderArgs) {
  const { user, session } = requireSignedIn(context, request);
  const sessions = await Session.findAll({ where: { userId: user.id }, order: [["lastSeenAt", "DESC"]] });
  return {
    user: { name: user.name, email: user.email },
    organisations: await listOrganisationsOfUser(user.id),
    sessions: sessions.map((candidate) => ({
      id: candidate.id,
      current: candidate.id === session.id,
      userAgent: candidate.userAgent,
      clientAddress: candidate.clientAddress,
      lastSeenAt: candidate.lastSeenAt.toISOString(),
    })),
  };
}

export default function Account({ loaderData }: Route.ComponentProps) {
  const home = loaderData.organisations[0] ? `/o/${loaderData.organisations[0].slug}` : "/";
  return (
    <main className="mx-auto max-w-3xl px-6 py-10">
      <Link to={home} className="flex items-center gap-2 text-harbour">
        <BrandMark className="size-7" />
        <span className="font-semibold">Sallyport</span>
      </Link>
      <h1 className="mt-6 text-display">Your account</h1>
      <p className="mt-1 text-sm text-ink-muted">
        {loaderData.user.name} · {loaderData.user.email}
      </p>
      <Card className="mt-8 p-5">
        <h2 className="text-sm font-semibold">Sessions</h2>
        <p className="mt-1 text-sm text-ink-muted">Every browser signed in to this account. Signing out everywhere ends them all, this one included.</p>
        <div className="mt-4">
          <Table>
            <thead>
              <tr>
                <Th>Browser</Th>
                <Th>Address</Th>
                <Th>Last seen (UTC)</Th>
              </tr>
            </thead>
            <tbody>
              {loaderData.sessions.map((session) => (
                <tr key={session.id}>
                  <Td className="max-w-xs truncate" title={session.userAgent}>
                    {session.current ? <strong>This browser · </strong> : null}
                    {session.userAgent || "unknown"}
                  </Td>
                  <Td className="text-ink-muted">{session.clientAddress}</Td>
                  <Td className="tabular text-ink-muted">{session.lastSeenAt.replace("T", " ").slice(0, 16)}</Td>
                </tr>
              ))}
            </tbody>
          </Table>
        </div>
        <Form method="post" action="/logout" className="mt-4">
          <input type="hidden" name="scope" value="everywhere" />
          <Button type="submit" variant="danger">
            Sign out everywhere
          </Button>
        </Form>
      </Card>
      <p className="mt-6 text-sm">
        <Link to="/forgot-password" className="text-ink-muted underline underline-offset-4">
          Change password by e-mailed link
        </Link>
      </p>
    </main>
  );
}
