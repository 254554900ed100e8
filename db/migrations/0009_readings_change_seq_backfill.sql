-- Readings logged by a row of sync_changes before 0008 take that row's position as their seq; the rows go, so a pull
-- meets each reading once, at the same place in the log as before.
UPDATE readings r SET seq = c.seq
FROM (SELECT record_id, max(seq) AS seq FROM sync_changes WHERE entity = 'reading' GROUP BY record_id) c
WHERE c.record_id = r.id;--> statement-breakpoint
DELETE FROM sync_changes WHERE entity = 'reading';
