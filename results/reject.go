package results

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"

	"hoplore/internal/atomicfile"
)

// RejectedDir is the folder, inside a result folder, where RejectBadParts
// moves parts it cannot use.
const RejectedDir = "parts-rejected"

// RejectBadParts reads every part in DIR and moves aside, into
// DIR/parts-rejected, each one that cannot be used: damaged (its checksum
// fails, it is cut short) or foreign (it holds a run of an experiment other
// than experiment, or a run other than its file name says). It returns the
// new paths of the parts moved, sorted; their runs are then missing from
// DIR, so a sweep runs them again. Cost: one read of every part.
func RejectBadParts(dir, experiment string) ([]string, error) {
	ids, err := ListParts(dir)
	if err != nil {
		return nil, err
	}
	sorted := make([]string, 0, len(ids))
	for id := range ids {
		sorted = append(sorted, id)
	}
	slices.Sort(sorted)
	var moved []string
	for _, id := range sorted {
		t, err := ReadPart(dir, id)
		if err == nil && t.Run.Experiment == experiment {
			continue
		}
		to := filepath.Join(dir, RejectedDir)
		if err := os.MkdirAll(to, 0o755); err != nil {
			return moved, fmt.Errorf("results: %w", err)
		}
		from := partPath(dir, id)
		dst := filepath.Join(to, filepath.Base(from))
		if err := os.Rename(from, dst); err != nil {
			return moved, fmt.Errorf("results: moving aside a bad part: %w", err)
		}
		moved = append(moved, dst)
	}
	if len(moved) > 0 {
		if err := atomicfile.SyncDir(filepath.Join(dir, PartsDir)); err != nil {
			return moved, fmt.Errorf("results: %w", err)
		}
	}
	return moved, nil
}
