import { z } from "zod";

// Parsed once at start-up; a missing or malformed variable stops the process with its name.
const EnvSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().startsWith("postgres", "must be a postgres:// URL"),
  AUTH_SECRET: z.string().min(32, "must be at least 32 characters"),
  APP_URL: z.url().default("http://127.0.0.1:3000"),
  SMTP_HOST: z.string().default("127.0.0.1"),
  SMTP_PORT: z.coerce.number().int().positive().default(1025),
  SMTP_USER: z.string().optional(),
  SMTP_PASSWORD: z.string().optional(),
  SMTP_SECURE: z.stringbool().default(false),
  MAIL_FROM: z.string().default("Chillwright <no-reply@chillwright.local>"),
  TRUST_PROXY: z.stringbool().default(false),
  DB_POOL_MAX: z.coerce.number().int().positive().default(10),
  // The alert worker runs inside each app process unless turned off; any number of processes may run it.
  ALERT_WORKER: z.stringbool().default(true),
  // How often the sweep looks for missed stages, overdue readings, escalations and digests.
  ALERT_SWEEP_SECONDS: z.coerce.number().min(0.5).max(600).default(30),
  // A batch's alerts are raised once its entries have been quiet this long (a burst of queued entries lands first).
  ALERT_SETTLE_SECONDS: z.coerce.number().min(0).max(600).default(15),
  ALERT_POLL_SECONDS: z.coerce.number().min(0.5).max(60).default(2),
  // A failed send is retried with exponential back-off from this delay, up to ALERT_RETRY_LIMIT times.
  ALERT_RETRY_DELAY_SECONDS: z.coerce.number().int().min(1).max(3600).default(10),
  ALERT_RETRY_LIMIT: z.coerce.number().int().min(0).max(50).default(10),
  // Photos go to files under STORAGE_DIR unless S3_BUCKET names an S3-compatible bucket.
  STORAGE_DIR: z.string().min(1).default(".data/photos"),
  S3_ENDPOINT: z.url().optional(),
  S3_BUCKET: z.string().min(1).optional(),
  S3_REGION: z.string().min(1).default("us-east-1"),
  S3_ACCESS_KEY_ID: z.string().min(1).optional(),
  S3_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  S3_FORCE_PATH_STYLE: z.stringbool().default(false),
}).refine((e) => !e.S3_ACCESS_KEY_ID === !e.S3_SECRET_ACCESS_KEY, {
  path: ["S3_SECRET_ACCESS_KEY"],
  message: "set S3_ACCESS_KEY_ID and S3_SECRET_ACCESS_KEY together, or neither",
});

export type Env = z.infer<typeof EnvSchema>;

function parseEnv(): Env {
  const parsed = EnvSchema.safeParse(process.env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`);
    throw new Error(`Chillwright cannot start; fix these environment variables:\n${lines.join("\n")}`);
  }
  return parsed.data;
}

export const env = parseEnv();
