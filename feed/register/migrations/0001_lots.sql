-- Version 1: lots with their manifests and reports, lines as parsed, metals, assays, weighings
-- and an audit trail.
CREATE TABLE lots (
    lot_id          TEXT    NOT NULL,
    version         INTEGER NOT NULL,
    current         INTEGER NOT NULL DEFAULT 1 CHECK (current IN (0, 1)),
    supplier        TEXT    NOT NULL DEFAULT '',
    received        TEXT    NOT NULL,          -- YYYY-MM-DD
    added_at        TEXT    NOT NULL,          -- RFC 3339, UTC
    tool_version    TEXT    NOT NULL,
    manifest_name   TEXT    NOT NULL,
    manifest_sha256 TEXT    NOT NULL,
    manifest        BLOB    NOT NULL,
    settings_json   TEXT    NOT NULL,
    report_json     TEXT    NOT NULL,
    items           INTEGER NOT NULL,
    nameplate_kwh   REAL    NOT NULL,
    black_mass_kg   REAL    NOT NULL,          -- P50
    PRIMARY KEY (lot_id, version)
);
CREATE TABLE lot_lines (
    lot_id          TEXT    NOT NULL,
    version         INTEGER NOT NULL,
    line            INTEGER NOT NULL,
    item_id         TEXT    NOT NULL,
    chemistry_label TEXT    NOT NULL,
    chemistry       TEXT    NOT NULL,
    format          TEXT    NOT NULL,
    count           INTEGER NOT NULL,
    energy_wh       REAL    NOT NULL,          -- per item
    mass_kg         REAL    NOT NULL,          -- per item, 0 if not weighed
    PRIMARY KEY (lot_id, version, line),
    FOREIGN KEY (lot_id, version) REFERENCES lots (lot_id, version) ON DELETE CASCADE
);
CREATE TABLE lot_groups (
    lot_id          TEXT    NOT NULL,
    version         INTEGER NOT NULL,
    chemistry       TEXT    NOT NULL,
    format          TEXT    NOT NULL,
    items           INTEGER NOT NULL,
    nameplate_kwh   REAL    NOT NULL,
    black_mass_kg   REAL    NOT NULL,          -- P50
    PRIMARY KEY (lot_id, version, chemistry, format),
    FOREIGN KEY (lot_id, version) REFERENCES lots (lot_id, version) ON DELETE CASCADE
);
CREATE TABLE lot_metals (
    lot_id          TEXT    NOT NULL,
    version         INTEGER NOT NULL,
    element         TEXT    NOT NULL,
    kg_p10          REAL    NOT NULL,
    kg_p50          REAL    NOT NULL,
    kg_p90          REAL    NOT NULL,
    wt_pct_p50      REAL    NOT NULL,
    PRIMARY KEY (lot_id, version, element),
    FOREIGN KEY (lot_id, version) REFERENCES lots (lot_id, version) ON DELETE CASCADE
);
CREATE TABLE assays (
    assay_id        INTEGER PRIMARY KEY,
    lot_id          TEXT    NOT NULL,
    lab             TEXT    NOT NULL,
    assayed_on      TEXT    NOT NULL,          -- YYYY-MM-DD
    added_at        TEXT    NOT NULL,
    file_name       TEXT    NOT NULL,
    file_sha256     TEXT    NOT NULL,
    content         BLOB    NOT NULL
);
CREATE TABLE assay_values (
    assay_id        INTEGER NOT NULL REFERENCES assays (assay_id) ON DELETE CASCADE,
    element         TEXT    NOT NULL,
    wt_pct          REAL    NOT NULL,
    sigma_wt_pct    REAL    NOT NULL,
    PRIMARY KEY (assay_id, element)
);
CREATE TABLE weighings (
    weighing_id     INTEGER PRIMARY KEY,
    lot_id          TEXT    NOT NULL,
    weighed_on      TEXT    NOT NULL,          -- YYYY-MM-DD
    kg              REAL    NOT NULL CHECK (kg > 0),
    added_at        TEXT    NOT NULL
);
CREATE TABLE audit (
    audit_id        INTEGER PRIMARY KEY,
    at              TEXT    NOT NULL,
    action          TEXT    NOT NULL,
    lot_id          TEXT    NOT NULL,
    detail          TEXT    NOT NULL DEFAULT ''
);
