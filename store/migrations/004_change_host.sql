-- Schema 4: the change log names the workstation each change came from
-- (its host name) beside the OS user, since several workstations may share
-- one unit on a server. Entries made before this step have none.

ALTER TABLE change_log ADD COLUMN host TEXT;
