import { randomBytes } from "node:crypto";
import { connect } from "~db/connect";
import { createTenant } from "~db/factories";

export const { db, pool } = connect(process.env.DATABASE_URL);

export const tag = () => randomBytes(4).toString("hex");

/** A fresh organisation with one site and a user of each role, unique to the calling test. */
export const newTenant = () => createTenant(db, tag());
