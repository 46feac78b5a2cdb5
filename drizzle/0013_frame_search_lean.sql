-- The frame search index without positions (detail=none): a LIKE over a trigram table still
-- answers exactly (FTS5 checks each candidate against frames), the index is about a third of the
-- size and costs about half as much to build. It is rebuilt with the entries the old one had:
-- each run's frames up to its search_indexed_to, so the cleanup of old runs stays exact.
DROP TABLE IF EXISTS `frame_search`;
--> statement-breakpoint
CREATE VIRTUAL TABLE `frame_search` USING fts5(`hex`, `text`, content='frames', content_rowid='id', tokenize='trigram', detail=none);
--> statement-breakpoint
INSERT INTO `frame_search` (rowid, hex, text) SELECT f.id, f.hex, f.text FROM `frames` f JOIN `decode_jobs` j ON j.id = f.job_id WHERE f.id <= j.search_indexed_to;
