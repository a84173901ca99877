-- Why: the first schema. One row per distinct stocked part (same kind, exact value, tolerance,
-- technology, package and bin is the same row), counted in whole pieces that can never go
-- negative, and an append-only ledger of every change to a count (who, when, why, how many) so
-- that today's counts can always be re-derived and audited. Values are exact integers in small
-- base units (milliohm, femtofarad, microvolt, microwatt, parts per 10^9), never display text.
-- Reservations (holds) will come in a later migration as their own table referencing part(id).

CREATE TABLE part (
    id             INTEGER PRIMARY KEY,
    kind           TEXT    NOT NULL CHECK (kind IN ('resistor', 'capacitor', 'trimmer', 'diode')),
    -- milliohm for resistors and trimmers, femtofarad for capacitors, 0 for diodes
    value          INTEGER NOT NULL CHECK (value >= 0),
    tol_minus_ppb  INTEGER NOT NULL CHECK (tol_minus_ppb >= 0),
    tol_plus_ppb   INTEGER NOT NULL CHECK (tol_plus_ppb >= 0),
    technology     TEXT    NOT NULL,
    volts_uv       INTEGER CHECK (volts_uv IS NULL OR volts_uv > 0),
    watts_uw       INTEGER CHECK (watts_uw IS NULL OR watts_uw > 0),
    package        TEXT    NOT NULL DEFAULT '',
    bin            TEXT    NOT NULL DEFAULT '',
    quantity       INTEGER NOT NULL DEFAULT 0 CHECK (quantity >= 0),
    low_stock      INTEGER CHECK (low_stock IS NULL OR low_stock >= 0),
    note           TEXT    NOT NULL DEFAULT '',
    created_at     TEXT    NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ', 'now')),
    UNIQUE (kind, value, tol_minus_ppb, tol_plus_ppb, technology, package, bin)
);

CREATE TABLE ledger (
    id             INTEGER PRIMARY KEY AUTOINCREMENT,
    part_id        INTEGER NOT NULL REFERENCES part (id),
    at             TEXT    NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ', 'now')),
    who            TEXT    NOT NULL,
    why            TEXT    NOT NULL,
    delta          INTEGER NOT NULL,
    quantity_after INTEGER NOT NULL CHECK (quantity_after >= 0)
);

CREATE INDEX ledger_by_part ON ledger (part_id, id);

CREATE TRIGGER ledger_no_update BEFORE UPDATE ON ledger
BEGIN
    SELECT RAISE(ABORT, 'the ledger is append-only: entries cannot be changed');
END;

CREATE TRIGGER ledger_no_delete BEFORE DELETE ON ledger
BEGIN
    SELECT RAISE(ABORT, 'the ledger is append-only: entries cannot be removed');
END;
