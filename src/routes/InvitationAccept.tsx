import { Link, useNavigate, useParams } from "react-router";
import { AuthFrame } from "../components/AuthFrame";
import { Button, DoneNote, ErrorNote, Loading, RoleTag } from "../components/ui";
import { useInvitationPreview, useMe, useRespondToInvitation, useSignOut } from "../lib/queries";

/** Where an invitation e-mail's link lands: who invited you to what, and accept or decline. */
export function InvitationAccept() {
  const { invitationId = "" } = useParams();
  const preview = useInvitationPreview(invitationId);
  const me = useMe();
  const respond = useRespondToInvitation(invitationId);
  const signOut = useSignOut();
  const navigate = useNavigate();

  if (preview.isPending || me.isPending) return <AuthFrame title="Invitation"><Loading /></AuthFrame>;
  if (preview.error) return <AuthFrame title="Invitation"><ErrorNote error={preview.error} /></AuthFrame>;
  const inv = preview.data;
  const here = `/invitations/${inv.id}`;
  const carry = `?next=${encodeURIComponent(here)}&email=${encodeURIComponent(inv.email)}`;

  let body;
  if (inv.status !== "pending") {
    body = <ErrorNote error={new Error(`This invitation is already ${inv.status}.`)} />;
  } else if (inv.expired) {
    body = <ErrorNote error={new Error("This invitation has expired. Ask the workshop's owner to send a new one.")} />;
  } else if (!me.data) {
    body = (
      <div className="flex flex-col gap-3">
        <p className="text-sm">To accept, sign in or create an account with <span className="font-mono">{inv.email}</span>.</p>
        <div className="flex gap-3">
          <Link to={`/sign-up${carry}`} className="rounded-md border border-bezel bg-bezel px-3.5 py-2 text-sm font-semibold text-dial">Create an account</Link>
          <Link to={`/sign-in${carry}`} className="rounded-md border border-rule bg-card px-3.5 py-2 text-sm font-semibold text-ink">Sign in</Link>
        </div>
      </div>
    );
  } else if (me.data.user.email !== inv.email.toLowerCase()) {
    body = (
      <div className="flex flex-col gap-3">
        <ErrorNote error={new Error(`This invitation is for ${inv.email}, and you are signed in as ${me.data.user.email}.`)} />
        <Button onClick={() => signOut.mutate(undefined, { onSuccess: () => navigate(`/sign-in${carry}`) })}>Sign out and switch</Button>
      </div>
    );
  } else if (respond.data?.status === "rejected") {
    body = <DoneNote>You declined the invitation.</DoneNote>;
  } else {
    body = (
      <div className="flex flex-col gap-3">
        <ErrorNote error={respond.error} />
        <div className="flex gap-3">
          <Button
            tone="primary"
            disabled={respond.isPending}
            onClick={() => respond.mutate("accept", { onSuccess: (r) => navigate(r.workshopId ? `/w/${r.workshopId}` : "/workshops") })}
          >
            Join the workshop
          </Button>
          <Button disabled={respond.isPending} onClick={() => respond.mutate("decline")}>
            Decline
          </Button>
        </div>
      </div>
    );
  }

  return (
    <AuthFrame title={`Join ${inv.workshopName}`}>
      <p className="mb-4 text-sm">
        {inv.invitedBy ?? "A workshop owner"} invites <span className="font-mono">{inv.email}</span> to join as <RoleTag role={inv.role} />.
      </p>
      {body}
    </AuthFrame>
  );
}
