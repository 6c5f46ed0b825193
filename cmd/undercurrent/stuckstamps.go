package main

import (
	"fmt"

	"undercurrent/calibrate"
	"undercurrent/ingest"
)

// retimeStuckStamps re-times an AC log's stale stamps (rows that repeat
// the time stamp of the row before with new values where the sampling
// around them is steady; calibrate.RetimeStuck) and returns the log and
// the warning, naming the first such row's line in path; s itself and ""
// when there is none. rows maps readings to data rows (readLogRows; nil:
// one to one). Done on the log as read, before rows are sorted or left
// out, so that the rows' neighbours are their neighbours in the file.
func retimeStuckStamps(path string, s *ingest.Samples, rows []int, rf *readFlags) (*ingest.Samples, string) {
	rs, stuck := calibrate.RetimeStuck(s)
	if len(stuck) == 0 {
		return s, ""
	}
	row := stuck[0]
	if rows != nil && row < len(rows) {
		row = rows[row]
	}
	where := fmt.Sprintf("data row %d", row+1)
	if lines := dataRowLines(path, []int{row}, rf.comment, len(rf.header) == 0); lines != nil {
		where = fmt.Sprintf("line %d", lines[0])
	}
	return rs, path + ": " + calibrate.StuckWarning(len(stuck), where)
}
