import { useState, type FormEvent } from "react";
import { useOutletContext } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { ROLE_DESCRIPTIONS, WORKSHOP_ROLES } from "../../shared/workshop/roles";
import { Button, Card, DoneNote, ErrorNote, Field, Loading, RoleTag, Select } from "../components/ui";
import { useCancelInvitation, useChangeRole, useInvitations, useInvite, useMe, useMembers, useRemoveMember } from "../lib/queries";

/** People in the workshop. Owners also see and send invitations and change roles. */
export function Members() {
  const w = useOutletContext<WorkshopDetail>();
  const can = (ability: string) => w.abilities.includes(ability);
  return (
    <div className="grid gap-8 lg:grid-cols-[1fr_22rem]">
      <div className="flex flex-col gap-8">
        <MemberList workshop={w} canChange={can("member.changeRole")} />
        {can("invitation.read") && <InvitationList workshopId={w.id} canCancel={can("invitation.cancel")} />}
      </div>
      <div className="flex flex-col gap-6">
        {can("invitation.create") && <InviteForm workshopId={w.id} />}
        <Card title="Roles">
          <dl className="flex flex-col gap-3 text-sm">
            {WORKSHOP_ROLES.map((r) => (
              <div key={r}>
                <dt><RoleTag role={r} /></dt>
                <dd className="mt-1 text-ink-soft">{ROLE_DESCRIPTIONS[r]}</dd>
              </div>
            ))}
          </dl>
        </Card>
      </div>
    </div>
  );
}

function MemberList({ workshop, canChange }: { workshop: WorkshopDetail; canChange: boolean }) {
  const members = useMembers(workshop.id);
  const me = useMe();
  const changeRole = useChangeRole(workshop.id);
  const remove = useRemoveMember(workshop.id);
  if (members.isPending) return <Loading what="Loading people" />;
  if (members.error) return <ErrorNote error={members.error} />;
  return (
    <Card title="People">
      <ErrorNote error={changeRole.error ?? remove.error} />
      <table className="w-full text-left text-sm">
        <thead className="border-b border-rule text-ink-soft">
          <tr>
            <th className="py-2 font-semibold">Name</th>
            <th className="py-2 font-semibold">E-mail</th>
            <th className="py-2 font-semibold">Role</th>
            {canChange && <th className="py-2 font-semibold"><span className="sr-only">Actions</span></th>}
          </tr>
        </thead>
        <tbody>
          {members.data.map((m) => (
            <tr key={m.id} className="border-b border-rule/60 last:border-0">
              <td className="py-2">{m.name}{m.userId === me.data?.user.id && <span className="text-ink-soft"> (you)</span>}</td>
              <td className="py-2 font-mono text-xs">{m.email}</td>
              <td className="py-2">
                {canChange ? (
                  <select
                    aria-label={`Role of ${m.name}`}
                    className="rounded border border-rule bg-card px-2 py-1"
                    value={m.role}
                    onChange={(e) => changeRole.mutate({ memberId: m.id, role: e.target.value as (typeof WORKSHOP_ROLES)[number] })}
                  >
                    {WORKSHOP_ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
                  </select>
                ) : (
                  <RoleTag role={m.role} />
                )}
              </td>
              {canChange && (
                <td className="py-2 text-right">
                  {m.userId !== me.data?.user.id && (
                    <Button
                      tone="danger"
                      className="px-2 py-1 text-xs"
                      onClick={() => {
                        if (window.confirm(`Remove ${m.name} from ${workshop.name}? They lose access at once.`)) remove.mutate(m.id);
                      }}
                    >
                      Remove
                    </Button>
                  )}
                </td>
              )}
            </tr>
          ))}
        </tbody>
      </table>
    </Card>
  );
}

function InvitationList({ workshopId, canCancel }: { workshopId: string; canCancel: boolean }) {
  const invitations = useInvitations(workshopId, true);
  const cancel = useCancelInvitation(workshopId);
  if (invitations.isPending) return <Loading what="Loading invitations" />;
  if (invitations.error) return <ErrorNote error={invitations.error} />;
  const pending = invitations.data.filter((i) => i.status === "pending");
  return (
    <Card title="Invitations waiting for an answer">
      {pending.length === 0 ? (
        <p className="text-sm text-ink-soft">None waiting.</p>
      ) : (
        <ul className="flex flex-col divide-y divide-rule/60 text-sm" aria-label="Pending invitations">
          {pending.map((i) => (
            <li key={i.id} className="flex items-center justify-between gap-3 py-2">
              <span className="font-mono text-xs">{i.email}</span>
              <span className="flex items-center gap-3">
                <RoleTag role={i.role} />
                <span className="text-ink-soft">until {new Date(i.expiresAt).toLocaleDateString()}</span>
                {canCancel && (
                  <Button tone="danger" className="px-2 py-1 text-xs" onClick={() => cancel.mutate(i.id)}>
                    Cancel
                  </Button>
                )}
              </span>
            </li>
          ))}
        </ul>
      )}
      <ErrorNote error={cancel.error} />
    </Card>
  );
}

function InviteForm({ workshopId }: { workshopId: string }) {
  const [email, setEmail] = useState("");
  const [role, setRole] = useState<"builder" | "viewer">("builder");
  const [sentTo, setSentTo] = useState<string | null>(null);
  const invite = useInvite(workshopId);

  function submit(e: FormEvent) {
    e.preventDefault();
    setSentTo(null);
    invite.mutate(
      { email: email.trim(), role },
      {
        onSuccess: () => {
          setSentTo(email.trim());
          setEmail("");
        },
      },
    );
  }

  return (
    <Card title="Invite someone">
      <form className="flex flex-col gap-4" onSubmit={submit} aria-label="Invite someone">
        <Field label="E-mail address" type="email" required value={email} onChange={(e) => setEmail(e.target.value)} />
        <Select label="Role" value={role} onChange={(e) => setRole(e.target.value as "builder" | "viewer")}>
          <option value="builder">builder</option>
          <option value="viewer">viewer</option>
        </Select>
        <p className="-mt-2 text-sm text-ink-soft">{ROLE_DESCRIPTIONS[role]}</p>
        <ErrorNote error={invite.error} />
        {sentTo && <DoneNote>Invitation sent to {sentTo}.</DoneNote>}
        <Button tone="primary" type="submit" disabled={invite.isPending}>
          Send invitation
        </Button>
      </form>
    </Card>
  );
}
