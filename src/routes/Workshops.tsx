import { useState, type FormEvent } from "react";
import { Link, useNavigate } from "react-router";
import { Button, Card, ErrorNote, Field, PageTitle, RoleTag } from "../components/ui";
import { useCreateWorkshop, useMe } from "../lib/queries";

/** The workshop picker: the workshops you belong to, and a form to start one. */
export function Workshops() {
  const me = useMe();
  const create = useCreateWorkshop();
  const navigate = useNavigate();
  const [name, setName] = useState("");
  const workshops = me.data?.workshops ?? [];

  function submit(e: FormEvent) {
    e.preventDefault();
    create.mutate({ name: name.trim() }, { onSuccess: (w) => navigate(`/w/${w.id}`) });
  }

  return (
    <div className="grid gap-8 lg:grid-cols-[1fr_22rem]">
      <div>
        <PageTitle sub="A workshop is a team: the people who build and test panels together.">Your workshops</PageTitle>
        {workshops.length === 0 ? (
          <Card>
            <p className="text-ink-soft">
              You are not in a workshop yet. Start one for your own build with the form beside this, or ask a friend's workshop owner
              to invite your e-mail address.
            </p>
          </Card>
        ) : (
          <ul className="flex flex-col gap-3" aria-label="Workshops">
            {workshops.map((w) => (
              <li key={w.id}>
                <Link
                  to={`/w/${w.id}`}
                  className="flex items-center justify-between rounded-lg border border-rule bg-card px-5 py-4 text-ink no-underline hover:border-ink/40"
                >
                  <span className="text-lg font-semibold">{w.name}</span>
                  <RoleTag role={w.role} />
                </Link>
              </li>
            ))}
          </ul>
        )}
      </div>
      <Card title="Start a workshop">
        <form className="flex flex-col gap-4" onSubmit={submit}>
          <Field label="Workshop name" required minLength={2} maxLength={80} value={name} onChange={(e) => setName(e.target.value)} placeholder="e.g. Basement overhead build" />
          <ErrorNote error={create.error} />
          <Button tone="primary" type="submit" disabled={create.isPending}>
            Create workshop
          </Button>
          <p className="text-sm text-ink-soft">You become its owner and can invite builders and viewers.</p>
        </form>
      </Card>
    </div>
  );
}
