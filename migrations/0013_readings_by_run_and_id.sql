-- The run page shows the latest readings of a run a page at a time and its live stream starts
-- from the newest reading id: both walk a run's readings in the order they were logged. Without
-- this index each view sorted every reading of the run (100,000 rows for a long one).
CREATE INDEX readings_by_run_and_id ON readings(run_id, id);
