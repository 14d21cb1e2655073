"use strict";

// Defence in depth for issue 7 (immutability): the application never changes
// published data or finished results, and these triggers make PostgreSQL
// refuse it too, whoever connects.
//
// - observations of a published or archived panel version, and regions of a
//   published or archived boundary version: no UPDATE, no DELETE;
// - result rows of a completed run: no INSERT, UPDATE or DELETE, and the run
//   row itself no UPDATE;
// - a published or archived version row: only published → archived (state,
//   archived_at, updated_at) may change, and it cannot be deleted.
//
// Deleting a whole workspace (or a panel, boundary set or run) still works:
// the foreign-key cascade removes the parent row first, so the trigger finds
// no parent in a protected state and lets the children go.
//
// The row checks on observations, regions and results are statement-level
// triggers over transition tables: one query per statement, not one per row,
// so bulk work (COPY of millions of observations) is not slowed. INSERT into
// observations is not checked here for that reason; the ingest writes
// observations only inside the transaction that moves a version from
// uploaded to validated (lib/intake/ingest-panel.ts).

const PROTECTED = "('published','archived')";

/**
 * A statement-level guard for rows that belong to a version: refuses the
 * statement when any row it touches belongs to a published or archived one.
 */
function versionRowsGuard({ fn, versions, fk, parents, parentFk, what, parentLabel, versionLabel }) {
  const hit = (rows) =>
    `SELECT v.id, v.version, v.state, parent.name INTO hit FROM ${versions} v JOIN ${parents} parent ON parent.id = v.${parentFk}
     WHERE v.state IN ${PROTECTED} AND v.id IN (${rows}) LIMIT 1;`;
  return `CREATE OR REPLACE FUNCTION ${fn}() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE hit record;
BEGIN
  IF TG_OP = 'UPDATE' THEN
    ${hit(`SELECT ${fk} FROM old_rows UNION SELECT ${fk} FROM new_rows`)}
  ELSE
    ${hit(`SELECT ${fk} FROM old_rows`)}
  END IF;
  IF FOUND THEN
    RAISE EXCEPTION '${what} of ${parentLabel} "%" version % (${versionLabel} id %) cannot be changed: the version is %. Upload a new version instead.',
      hit.name, hit.version, hit.id, hit.state USING ERRCODE = 'restrict_violation';
  END IF;
  RETURN NULL;
END $$`;
}

const FUNCTIONS = [
  versionRowsGuard({ fn: "tessera_guard_observations", versions: "panel_versions", fk: "panel_version_id", parents: "panels", parentFk: "panel_id", what: "Observations", parentLabel: "panel", versionLabel: "panel version" }),
  versionRowsGuard({
    fn: "tessera_guard_regions",
    versions: "boundary_versions",
    fk: "boundary_version_id",
    parents: "boundary_sets",
    parentFk: "boundary_set_id",
    what: "Regions",
    parentLabel: "boundary set",
    versionLabel: "boundary version",
  }),
  `CREATE OR REPLACE FUNCTION tessera_guard_run_results() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE hit integer;
BEGIN
  IF TG_OP = 'INSERT' THEN
    SELECT r.id INTO hit FROM runs r WHERE r.state = 'completed' AND r.id IN (SELECT run_id FROM new_rows) LIMIT 1;
  ELSIF TG_OP = 'UPDATE' THEN
    SELECT r.id INTO hit FROM runs r WHERE r.state = 'completed' AND r.id IN (SELECT run_id FROM old_rows UNION SELECT run_id FROM new_rows) LIMIT 1;
  ELSE
    SELECT r.id INTO hit FROM runs r WHERE r.state = 'completed' AND r.id IN (SELECT run_id FROM old_rows) LIMIT 1;
  END IF;
  IF FOUND THEN
    RAISE EXCEPTION 'Results of run % cannot be changed (%): the run is completed. Rerun it for new results.', hit, lower(TG_OP)
      USING ERRCODE = 'restrict_violation';
  END IF;
  RETURN NULL;
END $$`,
  `CREATE OR REPLACE FUNCTION tessera_guard_completed_run() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'Run % cannot be changed: it is completed. Rerun it for new results.', OLD.id USING ERRCODE = 'restrict_violation';
END $$`,
  `CREATE OR REPLACE FUNCTION tessera_guard_version_row() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE what text;
BEGIN
  IF OLD.state NOT IN ${PROTECTED} THEN
    IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
    RETURN NEW;
  END IF;
  what := CASE TG_TABLE_NAME WHEN 'panel_versions' THEN 'Panel' ELSE 'Boundary' END || ' version ' || OLD.version || ' (id ' || OLD.id || ')';
  IF TG_OP = 'DELETE' THEN
    IF TG_TABLE_NAME = 'panel_versions' THEN
      PERFORM 1 FROM panels WHERE id = OLD.panel_id;
    ELSE
      PERFORM 1 FROM boundary_sets WHERE id = OLD.boundary_set_id;
    END IF;
    -- The parent is already gone: a cascade from deleting it (or its workspace).
    IF NOT FOUND THEN RETURN OLD; END IF;
    RAISE EXCEPTION '% cannot be deleted: it is %.', what, OLD.state USING ERRCODE = 'restrict_violation';
  END IF;
  IF (to_jsonb(NEW) - 'state' - 'archived_at' - 'updated_at') IS DISTINCT FROM (to_jsonb(OLD) - 'state' - 'archived_at' - 'updated_at') THEN
    RAISE EXCEPTION '% cannot be changed: it is %; only archiving a published version is allowed.', what, OLD.state USING ERRCODE = 'restrict_violation';
  END IF;
  IF NEW.state <> OLD.state AND NOT (OLD.state = 'published' AND NEW.state = 'archived') THEN
    RAISE EXCEPTION '% cannot go from % to %.', what, OLD.state, NEW.state USING ERRCODE = 'restrict_violation';
  END IF;
  RETURN NEW;
END $$`,
];

const TRIGGERS = [
  "CREATE TRIGGER observations_immutable_update AFTER UPDATE ON observations REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION tessera_guard_observations()",
  "CREATE TRIGGER observations_immutable_delete AFTER DELETE ON observations REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION tessera_guard_observations()",
  "CREATE TRIGGER regions_immutable_update AFTER UPDATE ON regions REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION tessera_guard_regions()",
  "CREATE TRIGGER regions_immutable_delete AFTER DELETE ON regions REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION tessera_guard_regions()",
  "CREATE TRIGGER run_results_immutable_insert AFTER INSERT ON run_results REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION tessera_guard_run_results()",
  "CREATE TRIGGER run_results_immutable_update AFTER UPDATE ON run_results REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION tessera_guard_run_results()",
  "CREATE TRIGGER run_results_immutable_delete AFTER DELETE ON run_results REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION tessera_guard_run_results()",
  "CREATE TRIGGER runs_completed_immutable BEFORE UPDATE ON runs FOR EACH ROW WHEN (OLD.state = 'completed') EXECUTE FUNCTION tessera_guard_completed_run()",
  "CREATE TRIGGER panel_versions_published_immutable BEFORE UPDATE OR DELETE ON panel_versions FOR EACH ROW EXECUTE FUNCTION tessera_guard_version_row()",
  "CREATE TRIGGER boundary_versions_published_immutable BEFORE UPDATE OR DELETE ON boundary_versions FOR EACH ROW EXECUTE FUNCTION tessera_guard_version_row()",
];

const DROP = [
  ["observations_immutable_update", "observations"],
  ["observations_immutable_delete", "observations"],
  ["regions_immutable_update", "regions"],
  ["regions_immutable_delete", "regions"],
  ["run_results_immutable_insert", "run_results"],
  ["run_results_immutable_update", "run_results"],
  ["run_results_immutable_delete", "run_results"],
  ["runs_completed_immutable", "runs"],
  ["panel_versions_published_immutable", "panel_versions"],
  ["boundary_versions_published_immutable", "boundary_versions"],
];

/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      for (const sql of [...FUNCTIONS, ...TRIGGERS]) await queryInterface.sequelize.query(sql, { transaction });
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      for (const [trigger, table] of DROP) await queryInterface.sequelize.query(`DROP TRIGGER IF EXISTS ${trigger} ON ${table}`, { transaction });
      for (const fn of ["tessera_guard_observations", "tessera_guard_regions", "tessera_guard_run_results", "tessera_guard_completed_run", "tessera_guard_version_row"]) {
        await queryInterface.sequelize.query(`DROP FUNCTION IF EXISTS ${fn}()`, { transaction });
      }
    });
  },
};
