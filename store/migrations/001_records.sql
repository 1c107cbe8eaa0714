-- Schema 1: the unit's roster, procedures, lesions, settings and the
-- append-only change log. Codes are stored as the CSV spells them; NULL means
-- not recorded. Patient references are stored only as keyed hashes.

CREATE TABLE settings (
    key   TEXT PRIMARY KEY,
    value TEXT NOT NULL
);

CREATE TABLE roster (
    id      TEXT PRIMARY KEY,
    name    TEXT NOT NULL DEFAULT '',
    role    TEXT NOT NULL CHECK (role IN ('endoscopist', 'trainee')),
    retired INTEGER NOT NULL DEFAULT 0 CHECK (retired IN (0, 1))
);

CREATE TABLE procedures (
    id                     TEXT PRIMARY KEY,
    performed_on           TEXT NOT NULL,
    operator_id            TEXT NOT NULL REFERENCES roster (id),
    trainee_id             TEXT REFERENCES roster (id),
    supervision            TEXT,
    trainee_reached_caecum TEXT,
    patient_key            TEXT,
    age                    INTEGER,
    sex                    TEXT,
    indication             TEXT,
    setting                TEXT,
    exclusion              TEXT,
    extent                 TEXT,
    incomplete_reason      TEXT,
    caecal_photo           TEXT,
    withdrawal_seconds     INTEGER,
    bbps_right             INTEGER,
    bbps_transverse        INTEGER,
    bbps_left              INTEGER,
    retroversion           TEXT,
    midazolam_mg           REAL,
    fentanyl_ug            REAL,
    pethidine_mg           REAL,
    propofol               TEXT,
    comfort                INTEGER,
    detection_aid          TEXT,
    adverse_event          TEXT,
    recommended_interval   TEXT
);

CREATE TABLE lesions (
    procedure_id      TEXT NOT NULL REFERENCES procedures (id) ON DELETE CASCADE,
    lesion_no         INTEGER NOT NULL,
    segment           TEXT,
    size_mm           INTEGER,
    paris             TEXT,
    optical_class     TEXT,
    confidence        TEXT,
    imaging           TEXT,
    aid_class         TEXT,
    resection         TEXT,
    retrieved         TEXT,
    sent_to_pathology TEXT,
    histology         TEXT,
    dysplasia         TEXT,
    tattoo            TEXT,
    reported_on       TEXT,
    PRIMARY KEY (procedure_id, lesion_no)
);

CREATE TABLE change_log (
    id      INTEGER PRIMARY KEY,
    at      TEXT NOT NULL,
    os_user TEXT NOT NULL,
    action  TEXT NOT NULL CHECK (action IN ('insert', 'update', 'delete')),
    record  TEXT NOT NULL,
    old     TEXT,
    new     TEXT
);
