// Only for schema generation (scripts/generate-auth-schema.sh): the same plugins as
// server/auth/auth.ts, without a live database. Keep the plugin list in step.
import { betterAuth } from "better-auth";
import { drizzleAdapter } from "better-auth/adapters/drizzle";
import { organization } from "better-auth/plugins";
import { drizzle } from "drizzle-orm/node-postgres";

export const auth = betterAuth({
  database: drizzleAdapter(drizzle("postgres://unused@127.0.0.1:1/unused"), { provider: "pg" }),
  emailAndPassword: { enabled: true },
  plugins: [organization()],
});
