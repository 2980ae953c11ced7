-- The audit rows of one order, job bag or operation, found without reading the whole log: its latest booking (the order's forecast)
-- and its history (the job bag page), newest first by id.
CREATE INDEX "audit_log_entity_entity_id_id_index" ON "audit_log" USING btree ("entity","entity_id","id");