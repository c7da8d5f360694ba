-- Version 3: calibrations fitted from the register's assayed lots, each kept as it was saved so
-- that a report can name the calibration it used.
CREATE TABLE calibrations (
    version         INTEGER PRIMARY KEY,       -- 1, 2, 3... in the order saved
    created_at      TEXT    NOT NULL,          -- RFC 3339, UTC: when the fit was made
    saved_at        TEXT    NOT NULL,          -- RFC 3339, UTC
    method          TEXT    NOT NULL,
    lots            INTEGER NOT NULL,          -- lots the fit used
    calibration     TEXT    NOT NULL           -- the calibration as JSON
);
