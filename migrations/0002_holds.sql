-- Why: parts can now be held (reserved) for a plan and one of its members (a unit, a stage), so
-- that two builds drawing on one drawer never count on the same pieces. A hold is one row per
-- (plan, member, part) whose quantity is what it holds now; a released or used hold stays at 0
-- so that the ledger entries naming it stay valid. A part's held count is the sum of its holds
-- and is never stored a second time. Every hold, release and use appends a ledger entry in the
-- same transaction as the change: held_delta/held_after follow the held count the way
-- delta/quantity_after follow the shelf count, and plan/hold_id say which reservation moved.
-- Triggers refuse, in the database itself, any write that would leave a part with fewer pieces
-- on the shelf than its holds claim.

CREATE TABLE hold (
    id          INTEGER PRIMARY KEY,
    plan        TEXT    NOT NULL CHECK (length(trim(plan)) > 0),
    -- '' when the hold is for the plan as a whole
    member      TEXT    NOT NULL DEFAULT '',
    part_id     INTEGER NOT NULL REFERENCES part (id),
    quantity    INTEGER NOT NULL CHECK (quantity >= 0),
    created_at  TEXT    NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ', 'now')),
    who         TEXT    NOT NULL,
    note        TEXT    NOT NULL DEFAULT '',
    UNIQUE (plan, member, part_id)
);

CREATE INDEX hold_by_part ON hold (part_id, quantity);

ALTER TABLE ledger ADD COLUMN held_delta INTEGER NOT NULL DEFAULT 0;
ALTER TABLE ledger ADD COLUMN held_after INTEGER NOT NULL DEFAULT 0 CHECK (held_after >= 0);
ALTER TABLE ledger ADD COLUMN plan TEXT;
ALTER TABLE ledger ADD COLUMN hold_id INTEGER REFERENCES hold (id);

CREATE INDEX ledger_by_hold ON ledger (hold_id) WHERE hold_id IS NOT NULL;

CREATE TRIGGER hold_within_stock_on_insert BEFORE INSERT ON hold
WHEN NEW.quantity + (SELECT COALESCE(SUM(quantity), 0) FROM hold WHERE part_id = NEW.part_id)
     > (SELECT quantity FROM part WHERE id = NEW.part_id)
BEGIN
    SELECT RAISE(ABORT, 'holds cannot claim more pieces than the shelf has');
END;

CREATE TRIGGER hold_within_stock_on_update BEFORE UPDATE OF quantity ON hold
WHEN NEW.quantity + (SELECT COALESCE(SUM(quantity), 0) FROM hold
                      WHERE part_id = NEW.part_id AND id <> OLD.id)
     > (SELECT quantity FROM part WHERE id = NEW.part_id)
BEGIN
    SELECT RAISE(ABORT, 'holds cannot claim more pieces than the shelf has');
END;

CREATE TRIGGER hold_identity_is_fixed BEFORE UPDATE OF plan, member, part_id ON hold
BEGIN
    SELECT RAISE(ABORT, 'a hold keeps its plan, member and part; release it and hold anew');
END;

CREATE TRIGGER hold_no_delete BEFORE DELETE ON hold
BEGIN
    SELECT RAISE(ABORT, 'holds are kept for the ledger: release one to set it to 0');
END;

CREATE TRIGGER part_covers_its_holds BEFORE UPDATE OF quantity ON part
WHEN NEW.quantity < (SELECT COALESCE(SUM(quantity), 0) FROM hold WHERE part_id = NEW.id)
BEGIN
    SELECT RAISE(ABORT, 'a part cannot have fewer pieces on the shelf than are held for plans');
END;
