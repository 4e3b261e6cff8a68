-- The app runs as chillwright_runtime, a role that owns nothing in the public schema: it can read and
-- write what the product needs, but it can never change or delete the record (readings, corrective
-- actions, signatures, confirmations, share-link uses, audit events), nor switch the append-only
-- triggers off (only a table's owner can disable a trigger; only a superuser can set
-- session_replication_role). Migrations run as the owner. The scripts give the role its password.
DO $$
BEGIN
  IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'chillwright_runtime') THEN
    CREATE ROLE chillwright_runtime NOLOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE NOBYPASSRLS;
  END IF;
END $$;
--> statement-breakpoint
GRANT USAGE ON SCHEMA public TO chillwright_runtime;
--> statement-breakpoint
GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO chillwright_runtime;
--> statement-breakpoint
GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO chillwright_runtime;
--> statement-breakpoint
REVOKE UPDATE, DELETE, TRUNCATE ON readings, corrective_actions, verifications, action_confirmations, share_link_uses, audit_events FROM chillwright_runtime;
--> statement-breakpoint
-- Tables of later migrations are granted the same way; an append-only table revokes in its own migration.
ALTER DEFAULT PRIVILEGES IN SCHEMA public GRANT SELECT, INSERT, UPDATE, DELETE ON TABLES TO chillwright_runtime;
--> statement-breakpoint
ALTER DEFAULT PRIVILEGES IN SCHEMA public GRANT USAGE, SELECT ON SEQUENCES TO chillwright_runtime;
--> statement-breakpoint
-- The job queue (pg-boss) keeps its own schema and creates it on first start: the runtime role owns
-- that schema. A database where the owner already created it hands it over.
DO $$
DECLARE r record;
BEGIN
  EXECUTE format('GRANT CREATE ON DATABASE %I TO chillwright_runtime', current_database());
  IF EXISTS (SELECT 1 FROM pg_namespace WHERE nspname = 'pgboss') THEN
    ALTER SCHEMA pgboss OWNER TO chillwright_runtime;
    FOR r IN SELECT c.relname FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace WHERE n.nspname = 'pgboss' AND c.relkind IN ('r', 'p', 'v') LOOP
      EXECUTE format('ALTER TABLE pgboss.%I OWNER TO chillwright_runtime', r.relname);
    END LOOP;
    FOR r IN SELECT p.oid::regprocedure AS sig FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace WHERE n.nspname = 'pgboss' LOOP
      EXECUTE format('ALTER FUNCTION %s OWNER TO chillwright_runtime', r.sig);
    END LOOP;
    FOR r IN SELECT t.typname FROM pg_type t JOIN pg_namespace n ON n.oid = t.typnamespace WHERE n.nspname = 'pgboss' AND t.typtype = 'e' LOOP
      EXECUTE format('ALTER TYPE pgboss.%I OWNER TO chillwright_runtime', r.typname);
    END LOOP;
  END IF;
END $$;
