import { useState, type FormEvent } from "react";
import { Link } from "react-router";
import { AuthFrame } from "../components/AuthFrame";
import { Button, DoneNote, ErrorNote, Field } from "../components/ui";
import { useRequestPasswordReset } from "../lib/queries";

export function ForgotPassword() {
  const [email, setEmail] = useState("");
  const request = useRequestPasswordReset();

  function submit(e: FormEvent) {
    e.preventDefault();
    request.mutate(email.trim());
  }

  return (
    <AuthFrame title="Reset your password" foot={<Link className="text-calm underline" to="/sign-in">Back to sign in</Link>}>
      {request.isSuccess ? (
        <DoneNote>If an account uses {email}, a link to choose a new password is on its way. It works for one hour.</DoneNote>
      ) : (
        <form className="flex flex-col gap-4" onSubmit={submit}>
          <p className="text-sm text-ink-soft">We will e-mail you a link to choose a new password.</p>
          <Field label="E-mail" type="email" autoComplete="email" required value={email} onChange={(e) => setEmail(e.target.value)} />
          <ErrorNote error={request.error} />
          <Button tone="primary" type="submit" disabled={request.isPending}>
            Send the link
          </Button>
        </form>
      )}
    </AuthFrame>
  );
}
