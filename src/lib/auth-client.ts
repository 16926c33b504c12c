import { createAuthClient } from "better-auth/react";

/** better-auth's browser client, for sign-up, sign-in, sign-out and password reset. */
export const authClient = createAuthClient({ baseURL: window.location.origin, basePath: "/api/auth" });

/** better-auth answers { data, error }; turn an error into a thrown Error so TanStack Query sees it. */
export async function unwrap<T>(call: Promise<{ data: T | null; error: { message?: string; status: number } | null }>): Promise<T> {
  const { data, error } = await call;
  if (error) throw new Error(error.message || `Request refused (${error.status})`);
  return data as T;
}
