"use strict";

// Digests that are not sent say why, and digests compare only with what was
// actually delivered (docs: guarantees, digests).
// - skipped_reason: the sentence a skipped delivery records (nothing changed,
//   unsubscribed, no longer a member, no run yet). Until now the reason sat in
//   `error`, which is for failures; existing skips move over.
// - covered_run_id: the run whose results a digest reported. A later digest
//   compares with the newest run a SENT digest covered that was computed the
//   same way; weekly and on-request digests have no run_id, so the run is
//   recorded here (backfilled from summary.runId).
/** @type {import('sequelize-cli').Migration} */
module.exports = {
  async up(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      await q("ALTER TABLE digest_deliveries ADD COLUMN skipped_reason text NULL");
      await q("ALTER TABLE digest_deliveries ADD COLUMN covered_run_id integer NULL REFERENCES runs (id) ON DELETE SET NULL");
      await q("UPDATE digest_deliveries SET skipped_reason = COALESCE(error, 'Skipped (no reason was recorded before reasons were kept).'), error = NULL WHERE status = 'skipped'");
      await q(
        `UPDATE digest_deliveries d SET covered_run_id = r.id
           FROM runs r
          WHERE d.status IN ('sent', 'skipped')
            AND r.id = COALESCE(CASE WHEN d.summary->>'runId' ~ '^[0-9]{1,9}$' THEN CAST(d.summary->>'runId' AS integer) END, d.run_id)`,
      );
      await q("ALTER TABLE digest_deliveries ADD CONSTRAINT digest_deliveries_skip_has_reason CHECK (status <> 'skipped' OR skipped_reason IS NOT NULL)");
      await q("CREATE INDEX digest_deliveries_sent_runs_idx ON digest_deliveries (subscription_id, sent_at DESC, id DESC) WHERE status = 'sent'");
    });
  },

  async down(queryInterface) {
    await queryInterface.sequelize.transaction(async (transaction) => {
      const q = (sql) => queryInterface.sequelize.query(sql, { transaction });
      await q("DROP INDEX IF EXISTS digest_deliveries_sent_runs_idx");
      await q("ALTER TABLE digest_deliveries DROP CONSTRAINT IF EXISTS digest_deliveries_skip_has_reason");
      await q("UPDATE digest_deliveries SET error = COALESCE(error, skipped_reason) WHERE status = 'skipped'");
      await q("ALTER TABLE digest_deliveries DROP COLUMN IF EXISTS covered_run_id");
      await q("ALTER TABLE digest_deliveries DROP COLUMN IF EXISTS skipped_reason");
    });
  },
};
