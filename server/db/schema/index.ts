// One schema file per area; each is re-exported here for Drizzle and drizzle-kit.
export * from "./auth";
export * from "./shops";
export * from "./cases";
export * from "./queue";
export * from "./live";
export * from "./casebook";
export * from "./mail";
export * from "./uploads";
export * from "./desk";
