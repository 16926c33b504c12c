import { useState, type FormEvent } from "react";
import { Link, useNavigate, useSearchParams } from "react-router";
import { AuthFrame } from "../components/AuthFrame";
import { Button, ErrorNote, Field } from "../components/ui";
import { useSignIn } from "../lib/queries";
import { safeNext } from "../lib/next";

export function SignIn() {
  const [params] = useSearchParams();
  const next = safeNext(params.get("next"));
  const [email, setEmail] = useState(params.get("email") ?? "");
  const [password, setPassword] = useState("");
  const signIn = useSignIn();
  const navigate = useNavigate();

  function submit(e: FormEvent) {
    e.preventDefault();
    signIn.mutate({ email, password }, { onSuccess: () => navigate(next ?? "/workshops") });
  }

  const carry = next ? `?next=${encodeURIComponent(next)}${email ? `&email=${encodeURIComponent(email)}` : ""}` : "";
  return (
    <AuthFrame
      title="Sign in"
      foot={
        <>
          New here? <Link className="font-semibold text-calm underline" to={`/sign-up${carry}`}>Create an account</Link>
        </>
      }
    >
      <form className="flex flex-col gap-4" onSubmit={submit}>
        <Field label="E-mail" type="email" autoComplete="email" required value={email} onChange={(e) => setEmail(e.target.value)} />
        <Field label="Password" type="password" autoComplete="current-password" required value={password} onChange={(e) => setPassword(e.target.value)} />
        <ErrorNote error={signIn.error} />
        <Button tone="primary" type="submit" disabled={signIn.isPending}>
          {signIn.isPending ? "Signing in…" : "Sign in"}
        </Button>
        <Link className="text-sm text-calm underline" to="/forgot-password">
          Forgot your password?
        </Link>
      </form>
    </AuthFrame>
  );
}
