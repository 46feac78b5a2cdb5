-- Substring search over frames: a trigram FTS5 index on the hex and text columns of frames
-- (external content, so the text is stored once). Rows are added and removed by the decode
-- worker and the cleanup of old runs, in the same transactions as the frames themselves.
CREATE VIRTUAL TABLE `frame_search` USING fts5(`hex`, `text`, content='frames', content_rowid='id', tokenize='trigram');
