import pg from "pg";
import { Sequelize } from "sequelize";
import { env } from "@/lib/config/env";

// One Sequelize instance per process; kept on globalThis so `next dev` reloads
// do not open a new pool each time.
const globalForDb = globalThis as unknown as { tesseraSequelize?: Sequelize };

export function db(): Sequelize {
  if (!globalForDb.tesseraSequelize) {
    globalForDb.tesseraSequelize = new Sequelize(env().DATABASE_URL, {
      dialect: "postgres",
      dialectModule: pg,
      logging: false,
      pool: { max: 10, min: 0, idle: 10_000, acquire: 15_000 },
    });
  }
  return globalForDb.tesseraSequelize;
}
