/** Runtime configuration from the environment, validated once at start. */
import { z } from "zod";

const loopbackHosts = new Set(["127.0.0.1", "localhost", "::1"]);

export const configSchema = z.object({
  host: z.string().min(1).default("127.0.0.1"),
  port: z.coerce.number().int().min(0).max(65535).default(3000),
  databaseUrl: z.string().min(1).default("file:./data/tubeledger.db"),
  accessToken: z.string().min(16, "TUBELEDGER_TOKEN must be at least 16 characters").optional(),
  /** Folder of the reference tube library (JSON files); tests may point elsewhere. */
  libraryDir: z.string().optional(),
  /** Largest JSON/form body, bytes. */
  bodyLimitBytes: z.number().int().positive().default(1024 * 1024),
  /** Largest CSV upload or backup restore, bytes. */
  uploadLimitBytes: z.number().int().positive().default(64 * 1024 * 1024),
});

export type AppConfig = z.infer<typeof configSchema>;

export function isLoopback(host: string): boolean {
  return loopbackHosts.has(host) || host.startsWith("127.");
}

/** Reads PORT, HOST, DATABASE_URL and TUBELEDGER_TOKEN; refuses a non-loopback bind without a token. */
export function configFromEnvironment(env: NodeJS.ProcessEnv = process.env): AppConfig {
  const config = configSchema.parse({
    host: env.HOST || undefined,
    port: env.PORT || undefined,
    databaseUrl: env.DATABASE_URL || undefined,
    accessToken: env.TUBELEDGER_TOKEN || undefined,
  });
  assertSafeBinding(config);
  return config;
}

export function assertSafeBinding(config: Pick<AppConfig, "host" | "accessToken">): void {
  if (!isLoopback(config.host) && !config.accessToken) {
    throw new Error(
      `Refusing to listen on ${config.host}: other machines could reach the ledger. ` +
        "Set TUBELEDGER_TOKEN (16+ characters) to require a token, or bind to 127.0.0.1.",
    );
  }
}
