"use strict";

// Issue 13 (runs told apart): each run gets a number of its own workspace
// ("Run 7"), shown in labels instead of the global id, which keeps serving URLs.
//
// - runs.number, unique per workspace, backfilled in id order per workspace;
// - workspaces.last_run_number, a per-workspace counter;
// - a BEFORE INSERT trigger on runs takes the next number from the counter.
//   The UPDATE of the workspace row holds that row's lock until the inserting
//   transaction ends, so concurrent starts in one workspace wait for each
//   other and never share a number, while other workspaces are not held up.
//   Every insert (the app, scripts, benchmarks) is numbered the same way, and a
//   number passed by the caller is ignored.
//
// Completed runs are frozen by runs_completed_immutable (migration
// 20261207000300): the backfill switches that trigger off for its one UPDATE,
// inside this transaction, so no other session ever sees it off.

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      await q("ALTER TABLE runs ADD COLUMN number integer");
      await q("ALTER TABLE runs DISABLE TRIGGER runs_completed_immutable");
      await q(
        `UPDATE runs r SET number = n.rn
           FROM (SELECT id, row_number() OVER (PARTITION BY workspace_id ORDER BY id) AS rn FROM runs) n
          WHERE n.id = r.id`,
      );
      await q("ALTER TABLE runs ENABLE TRIGGER runs_completed_immutable");
      await q("ALTER TABLE runs ALTER COLUMN number SET NOT NULL");
      await q("ALTER TABLE runs ADD CONSTRAINT runs_number_positive CHECK (number > 0)");
      await q("ALTER TABLE runs ADD CONSTRAINT runs_workspace_number_unique UNIQUE (workspace_id, number)");

      await q("ALTER TABLE workspaces ADD COLUMN last_run_number integer NOT NULL DEFAULT 0");
      await q("UPDATE workspaces w SET last_run_number = COALESCE((SELECT max(r.number) FROM runs r WHERE r.workspace_id = w.id), 0)");

      await q(`CREATE OR REPLACE FUNCTION tessera_assign_run_number() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  UPDATE workspaces SET last_run_number = last_run_number + 1 WHERE id = NEW.workspace_id RETURNING last_run_number INTO NEW.number;
  IF NEW.number IS NULL THEN
    RAISE EXCEPTION 'There is no workspace %, so run cannot be numbered.', NEW.workspace_id USING ERRCODE = 'foreign_key_violation';
  END IF;
  RETURN NEW;
END $$`);
      await q("CREATE TRIGGER runs_assign_number BEFORE INSERT ON runs FOR EACH ROW EXECUTE FUNCTION tessera_assign_run_number()");
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      await q("DROP TRIGGER IF EXISTS runs_assign_number ON runs");
      await q("DROP FUNCTION IF EXISTS tessera_assign_run_number()");
      await q("ALTER TABLE workspaces DROP COLUMN IF EXISTS last_run_number");
      await q("ALTER TABLE runs DROP CONSTRAINT IF EXISTS runs_workspace_number_unique");
      await q("ALTER TABLE runs DROP CONSTRAINT IF EXISTS runs_number_positive");
      await q("ALTER TABLE runs DROP COLUMN IF EXISTS number");
    });
  },
};
