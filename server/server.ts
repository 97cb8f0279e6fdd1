/** Builds the app, listens, and shuts down cleanly. Nothing else. */
import { buildApp } from "./app.ts";
import { configFromEnvironment } from "./config.ts";

let config;
try {
  config = configFromEnvironment();
} catch (error) {
  console.error(error instanceof Error ? error.message : error);
  process.exit(1);
}

const app = await buildApp({ config, logger: { level: process.env.LOG_LEVEL ?? "warn" } });
const address = await app.listen({ host: config.host, port: config.port });
console.log(`Tubeledger is serving on ${address.replace("[::1]", "localhost")}`);

for (const signal of ["SIGINT", "SIGTERM"] as const) {
  process.once(signal, () => {
    void app.close().then(() => process.exit(0));
  });
}
