-- Schema 2: indexes for the period and operator queries the indicators run,
-- the pathology inbox, and guards that keep the change log append-only
-- (triggers, each backend's own: see steps in sqlite.go and postgres.go).

CREATE INDEX procedures_by_date ON procedures (performed_on, id);
CREATE INDEX procedures_by_operator ON procedures (operator_id, performed_on);
CREATE INDEX procedures_by_trainee ON procedures (trainee_id, performed_on);
CREATE INDEX lesions_awaiting ON lesions (histology, procedure_id);
