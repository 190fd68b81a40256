package results

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"hoplore/internal/inputerr"
)

// LockFile is the lock file of a result folder: whoever writes to the folder
// (run, merge, report, compare) holds an exclusive lock on it for the whole
// write.
const LockFile = ".hoplore.lock"

// Holder describes the process that holds (or last held) a result folder's
// lock. It is written into the lock file, for the messages of refused
// writers; the lock itself is the kernel's, not the file's content.
type Holder struct {
	PID     int       `json:"pid"`
	Host    string    `json:"host"`
	Command string    `json:"command"`
	Since   time.Time `json:"since"`
}

// LockedError is returned by LockDir when another process holds the lock.
type LockedError struct {
	Dir    string
	Holder Holder // zero when the holder could not be read
}

func (e *LockedError) Error() string {
	h := e.Holder
	if h.PID == 0 {
		return fmt.Sprintf("results: %s is being written by another hoplore process; wait for it to end", e.Dir)
	}
	return fmt.Sprintf("results: %s is being written by %s (PID %d on host %s, since %s); wait for it to end or choose another --out",
		e.Dir, h.Command, h.PID, h.Host, h.Since.Local().Format("2006-01-02 15:04:05"))
}

// Is marks a refused lock as bad input (inputerr.ErrBadInput): the folder
// is in use, nothing went wrong in this process.
func (e *LockedError) Is(target error) bool { return target == inputerr.ErrBadInput }

// Lock is an exclusive lock on a result folder; Unlock releases it.
type Lock struct {
	f   *os.File
	dir string
}

// LockDir takes the exclusive lock of folder DIR, which must exist, without
// waiting: if another process holds it, the error is a *LockedError naming
// the holder's PID, host and command. The lock is an flock(2) on DIR's
// LockFile, so the kernel releases it when the holder ends in any way
// (exit, kill -9, crash): a lock left by a killed process is never trusted,
// whatever the file says. Two locks taken in one process on one folder also
// exclude each other.
//
// Taking the lock also removes the temporary files that a killed writer
// left in DIR and DIR/parts (names starting with a dot and holding
// ".tmp-"): while the lock is held nobody else can be writing them.
func LockDir(dir, command string) (*Lock, error) {
	if dir == "" {
		return nil, errors.New("results: empty result folder name")
	}
	if st, err := os.Stat(dir); err != nil {
		return nil, fmt.Errorf("results: %w", err)
	} else if !st.IsDir() {
		return nil, fmt.Errorf("results: %s is not a folder", dir)
	}
	path := filepath.Join(dir, LockFile)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			le := &LockedError{Dir: dir}
			if b, rerr := os.ReadFile(path); rerr == nil {
				_ = json.Unmarshal(b, &le.Holder) // best effort: the message says less
			}
			return nil, le
		}
		return nil, fmt.Errorf("results: locking %s: %w", dir, err)
	}
	host, _ := os.Hostname()
	h := Holder{PID: os.Getpid(), Host: host, Command: command, Since: time.Now().UTC().Truncate(time.Second)}
	b, _ := json.Marshal(h)
	if err := f.Truncate(0); err == nil {
		_, _ = f.WriteAt(append(b, '\n'), 0) // informative only
	}
	l := &Lock{f: f, dir: dir}
	if err := removeTemps(dir); err != nil {
		l.Unlock()
		return nil, err
	}
	return l, nil
}

// Unlock releases the lock. It is safe to call more than once.
func (l *Lock) Unlock() {
	if l == nil || l.f == nil {
		return
	}
	_ = syscall.Flock(int(l.f.Fd()), syscall.LOCK_UN)
	l.f.Close()
	l.f = nil
}

// isTemp reports whether name is a temporary file of ours: a dot-file with
// ".tmp-" in its name (see atomicfile.Create).
func isTemp(name string) bool {
	return strings.HasPrefix(name, ".") && strings.Contains(name, ".tmp-")
}

// removeTemps removes our temporary files from DIR and DIR/parts.
func removeTemps(dir string) error {
	for _, d := range []string{dir, filepath.Join(dir, PartsDir)} {
		ents, err := os.ReadDir(d)
		if errors.Is(err, fs.ErrNotExist) {
			continue
		}
		if err != nil {
			return fmt.Errorf("results: %w", err)
		}
		for _, e := range ents {
			if e.Type().IsRegular() && isTemp(e.Name()) {
				if err := os.Remove(filepath.Join(d, e.Name())); err != nil && !errors.Is(err, fs.ErrNotExist) {
					return fmt.Errorf("results: removing a leftover temporary file: %w", err)
				}
			}
		}
	}
	return nil
}
