import { useState, type FormEvent } from "react";
import { Link, useSearchParams } from "react-router";
import { AuthFrame } from "../components/AuthFrame";
import { Button, DoneNote, ErrorNote, Field } from "../components/ui";
import { useResetPassword } from "../lib/queries";

export function ResetPassword() {
  const [params] = useSearchParams();
  const token = params.get("token");
  const linkError = params.get("error");
  const [password, setPassword] = useState("");
  const reset = useResetPassword();

  if (!token || linkError) {
    return (
      <AuthFrame title="Choose a new password">
        <ErrorNote error={new Error("This reset link is not valid or has expired. Ask for a new one.")} />
        <p className="mt-4"><Link className="text-calm underline" to="/forgot-password">Ask for a new link</Link></p>
      </AuthFrame>
    );
  }

  function submit(e: FormEvent) {
    e.preventDefault();
    reset.mutate({ token: token!, newPassword: password });
  }

  return (
    <AuthFrame title="Choose a new password">
      {reset.isSuccess ? (
        <div className="flex flex-col gap-4">
          <DoneNote>Your password is changed. Other sessions were signed out.</DoneNote>
          <Link className="font-semibold text-calm underline" to="/sign-in">Sign in</Link>
        </div>
      ) : (
        <form className="flex flex-col gap-4" onSubmit={submit}>
          <Field label="New password" type="password" autoComplete="new-password" required minLength={10} value={password} onChange={(e) => setPassword(e.target.value)} hint="At least 10 characters." />
          <ErrorNote error={reset.error} />
          <Button tone="primary" type="submit" disabled={reset.isPending}>Save the new password</Button>
        </form>
      )}
    </AuthFrame>
  );
}
