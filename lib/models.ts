import { defineModels, type ModelRegistry } from "@/models";
import { db } from "@/lib/db";

/**
 * The Sequelize models, defined on this process's instance (lib/db.ts) on
 * first use. models/ imports nothing from lib/; this is where the two meet.
 */
export function models(): ModelRegistry {
  return defineModels(db());
}
