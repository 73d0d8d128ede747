-- A practice log as schema version 1 wrote it (a frozen copy of that
-- schema, with three attempts typed by hand), for the migration test.
-- Trace BLOBs are little-endian float32 records made with Python's
-- struct.pack('<4f', ...): (0, 220, 1.5, 1) and (0.005, 221, 9.3, 8) for
-- the first attempt; (1, 20, 17.5, 1) for the ear attempt.
PRAGMA application_id = 1112820807;
CREATE TABLE attempt (
  id                 INTEGER PRIMARY KEY,
  started_at         TEXT NOT NULL,
  drill              TEXT NOT NULL,
  kind               TEXT NOT NULL CHECK (kind IN ('hold', 'ear')),
  target             TEXT NOT NULL,
  target_name        TEXT NOT NULL DEFAULT '',
  root_hz            REAL,
  settings           TEXT NOT NULL DEFAULT '{}',
  dur_s              REAL,
  locked             INTEGER CHECK (locked IN (0, 1)),
  time_to_lock_s     REAL,
  mean_dev_cents     REAL,
  spread_cents       REAL,
  in_tolerance_share REAL,
  threshold_cents    REAL,
  trials             INTEGER,
  correct_share      REAL
);
CREATE TABLE trace (
  attempt_id INTEGER PRIMARY KEY REFERENCES attempt (id) ON DELETE CASCADE,
  records    BLOB NOT NULL
);
CREATE INDEX attempt_by_target ON attempt (kind, target, started_at);
INSERT INTO attempt VALUES (1, '2025-02-03T18:20:01.250Z', 'hold-septimal-tritones', 'hold', '7/5', 'septimal tritone',
  146.832, '{"hold_s": 5}', 5.0, 1, 0.82, -3.25, 4.5, 0.71, NULL, NULL, NULL);
INSERT INTO attempt VALUES (2, '2025-02-03T18:20:09.000Z', 'hold-septimal-tritones', 'hold', '10/7', 'large septimal tritone',
  146.832, '{"hold_s": 5}', 5.0, 0, NULL, 12.0, 6.0, 0.2, NULL, NULL, NULL);
INSERT INTO attempt VALUES (3, '2025-02-04T09:00:00.000Z', 'ear-tritones', 'ear', '11/8 7/5 45/32 600c 10/7', '',
  110.0, '{}', 240.0, NULL, NULL, NULL, NULL, NULL, 14.2, 48, 0.75);
INSERT INTO trace VALUES (1, X'0000000000005C430000C03F0000803F0AD7A33B00005D43CDCC144100000041');
INSERT INTO trace VALUES (2, X'');
INSERT INTO trace VALUES (3, X'0000803F0000A04100008C410000803F');
PRAGMA user_version = 1;
