import { useState, type FormEvent } from "react";
import { Link, useNavigate, useSearchParams } from "react-router";
import { AuthFrame } from "../components/AuthFrame";
import { Button, ErrorNote, Field } from "../components/ui";
import { safeNext } from "../lib/next";
import { useSignUp } from "../lib/queries";

export function SignUp() {
  const [params] = useSearchParams();
  const next = safeNext(params.get("next"));
  const [name, setName] = useState("");
  const [email, setEmail] = useState(params.get("email") ?? "");
  const [password, setPassword] = useState("");
  const signUp = useSignUp();
  const navigate = useNavigate();
  const tooShort = password.length > 0 && password.length < 10;

  function submit(e: FormEvent) {
    e.preventDefault();
    if (tooShort) return;
    signUp.mutate({ name: name.trim(), email: email.trim(), password }, { onSuccess: () => navigate(next ?? "/workshops") });
  }

  const carry = next ? `?next=${encodeURIComponent(next)}` : "";
  return (
    <AuthFrame
      title="Create your account"
      foot={
        <>
          Already have one? <Link className="font-semibold text-calm underline" to={`/sign-in${carry}`}>Sign in</Link>
        </>
      }
    >
      <form className="flex flex-col gap-4" onSubmit={submit}>
        <Field label="Your name" autoComplete="name" required minLength={1} maxLength={80} value={name} onChange={(e) => setName(e.target.value)} />
        <Field label="E-mail" type="email" autoComplete="email" required value={email} onChange={(e) => setEmail(e.target.value)} />
        <Field
          label="Password"
          type="password"
          autoComplete="new-password"
          required
          value={password}
          onChange={(e) => setPassword(e.target.value)}
          hint="At least 10 characters."
          error={tooShort ? "At least 10 characters, please." : undefined}
        />
        <ErrorNote error={signUp.error} />
        <Button tone="primary" type="submit" disabled={signUp.isPending}>
          {signUp.isPending ? "Creating…" : "Create account"}
        </Button>
      </form>
    </AuthFrame>
  );
}
