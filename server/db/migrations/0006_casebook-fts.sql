-- Casebook full-text search: SQLite FTS5 over the anonymised text of each visible entry.
-- porter stemming over unicode61 tokens ("misfiring" finds "misfire"), prefix indexes for
-- 2- and 3-character prefixes (fast "mis*"), external content = the visible entries only.
-- The triggers keep the index in step with every insert, edit of an indexed column, hide,
-- unhide and delete; the content view leaves hidden entries out so that
-- INSERT INTO casebook_fts(casebook_fts, rank) VALUES ('integrity-check', 1) compares like with like.
CREATE VIEW `casebook_fts_source` AS
  SELECT `doc_id`, `vehicle`, `complaint`, `symptoms`, `codes`, `diagnosis`, `root_cause`, `fix`, `tags`
  FROM `casebook_entry` WHERE `hidden` = 0;
--> statement-breakpoint
CREATE VIRTUAL TABLE `casebook_fts` USING fts5(
  vehicle, complaint, symptoms, codes, diagnosis, root_cause, fix, tags,
  content='casebook_fts_source', content_rowid='doc_id',
  tokenize='porter unicode61', prefix='2 3'
);
--> statement-breakpoint
CREATE TRIGGER `casebook_fts_insert` AFTER INSERT ON `casebook_entry` WHEN new.`hidden` = 0
BEGIN
  INSERT INTO casebook_fts(rowid, vehicle, complaint, symptoms, codes, diagnosis, root_cause, fix, tags)
  VALUES (new.doc_id, new.vehicle, new.complaint, new.symptoms, new.codes, new.diagnosis, new.root_cause, new.fix, new.tags);
END;
--> statement-breakpoint
CREATE TRIGGER `casebook_fts_delete` AFTER DELETE ON `casebook_entry` WHEN old.`hidden` = 0
BEGIN
  INSERT INTO casebook_fts(casebook_fts, rowid, vehicle, complaint, symptoms, codes, diagnosis, root_cause, fix, tags)
  VALUES ('delete', old.doc_id, old.vehicle, old.complaint, old.symptoms, old.codes, old.diagnosis, old.root_cause, old.fix, old.tags);
END;
--> statement-breakpoint
-- One trigger for edits and hiding, so the old row always leaves the index before the new one enters.
CREATE TRIGGER `casebook_fts_update` AFTER UPDATE OF vehicle, complaint, symptoms, codes, diagnosis, root_cause, fix, tags, hidden ON `casebook_entry`
BEGIN
  INSERT INTO casebook_fts(casebook_fts, rowid, vehicle, complaint, symptoms, codes, diagnosis, root_cause, fix, tags)
  SELECT 'delete', old.doc_id, old.vehicle, old.complaint, old.symptoms, old.codes, old.diagnosis, old.root_cause, old.fix, old.tags
  WHERE old.hidden = 0;
  INSERT INTO casebook_fts(rowid, vehicle, complaint, symptoms, codes, diagnosis, root_cause, fix, tags)
  SELECT new.doc_id, new.vehicle, new.complaint, new.symptoms, new.codes, new.diagnosis, new.root_cause, new.fix, new.tags
  WHERE new.hidden = 0;
END;
