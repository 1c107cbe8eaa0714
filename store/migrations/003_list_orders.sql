-- Schema 3: indexes matching the case list's sort orders, so that a page
-- deep in a large logbook is found without sorting every procedure.

CREATE INDEX procedures_by_operator_id ON procedures (operator_id, id);
CREATE INDEX procedures_by_age ON procedures (age, id);
CREATE INDEX procedures_by_indication ON procedures (indication, id);
CREATE INDEX procedures_by_extent ON procedures (extent, id);
