-- The large JSON of runs (a result is about 75 kB, its data about 35 kB) is compressed with lz4
-- instead of the default pglz: storing a run costs PostgreSQL several times less CPU, and
-- reading one back decompresses faster. Values already stored keep their compression until
-- rewritten. A server built without lz4 keeps pglz (the statement would fail; it is skipped).
DO $$
BEGIN
  ALTER TABLE "study_runs" ALTER COLUMN "result" SET COMPRESSION lz4;
  ALTER TABLE "study_runs" ALTER COLUMN "data" SET COMPRESSION lz4;
  ALTER TABLE "robustness_runs" ALTER COLUMN "result" SET COMPRESSION lz4;
  ALTER TABLE "jobs" ALTER COLUMN "result" SET COMPRESSION lz4;
EXCEPTION WHEN feature_not_supported OR invalid_parameter_value THEN
  RAISE NOTICE 'lz4 is not available on this server; large JSON stays compressed with pglz';
END $$;
