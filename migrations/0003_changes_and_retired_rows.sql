-- Why: undo, row care and the ledger as a log need three things the schema did not have.
-- (1) One change (a take, a plan's hold, a use of five units) writes several ledger entries in
--     one transaction; change_id groups them (the id of the change's first entry) so that undo
--     can revert a whole change. Entries from before this migration have none: each is its own
--     change. (2) undoes names the change an entry compensates, so undo is a new entry that
--     points at the old one and history is never edited. (3) A stock row cannot be deleted (its
--     ledger entries name it), so an empty row with no holds is retired instead: retired_at is
--     set, the row leaves every list, and its history stays readable.

ALTER TABLE ledger ADD COLUMN change_id INTEGER;
ALTER TABLE ledger ADD COLUMN undoes INTEGER;
ALTER TABLE part ADD COLUMN retired_at TEXT;

CREATE INDEX ledger_by_change ON ledger (change_id) WHERE change_id IS NOT NULL;
CREATE INDEX ledger_by_who ON ledger (who, id);
CREATE INDEX ledger_by_time ON ledger (at);

CREATE TRIGGER part_retires_only_when_empty BEFORE UPDATE OF retired_at ON part
WHEN NEW.retired_at IS NOT NULL
     AND (NEW.quantity > 0
          OR (SELECT COALESCE(SUM(quantity), 0) FROM hold WHERE part_id = NEW.id) > 0)
BEGIN
    SELECT RAISE(ABORT, 'only an empty row with no holds can be retired');
END;

CREATE TRIGGER retired_part_stays_empty BEFORE UPDATE OF quantity ON part
WHEN NEW.retired_at IS NOT NULL AND NEW.quantity > 0
BEGIN
    SELECT RAISE(ABORT, 'a retired row cannot take pieces; bring it back first');
END;
