// Package atomicfile writes files so that a reader sees either the old file
// or the complete new one, never a part, and so that a crash loses no file
// that was reported written: the content goes to a temporary file in the
// same folder (named with a leading dot, so that folder listings can skip
// it), the file is synced and gets its permissions, is renamed over the
// target, and the folder is synced so that the rename survives a crash
// (common practice for atomic replacement on POSIX file systems).
//
// Write and WriteBytes do all of it for one file. Create, File.Close and
// Commit split it so that several files are written first and renamed
// together at the end, each folder synced once.
package atomicfile

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// SkipSync, set only by benchmarks that measure everything but the disk,
// leaves out every sync. Never set it in a program.
var SkipSync bool

// File is a file being written in place of a target path: a buffered
// temporary file in the target's folder. Its Write is buffered; Close makes
// it complete and durable; Commit puts it in place; Abort throws it away.
type File struct {
	path   string
	perm   os.FileMode
	f      *os.File
	bw     *bufio.Writer
	closed bool // synced and closed, ready to commit
	gone   bool // renamed or removed
}

// Create starts a file that will replace path with permissions perm. Its
// temporary file is named "." + base name of path + ".tmp-" + a random
// suffix, in path's folder, so that a cleaner can recognise leftovers.
func Create(path string, perm os.FileMode) (*File, error) {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return nil, err
	}
	return &File{path: path, perm: perm, f: f, bw: bufio.NewWriterSize(f, 1<<16)}, nil
}

// Write writes p to the temporary file (buffered).
func (f *File) Write(p []byte) (int, error) { return f.bw.Write(p) }

// TempName returns the temporary file's path.
func (f *File) TempName() string { return f.f.Name() }

// Path returns the path the file will replace.
func (f *File) Path() string { return f.path }

// Close flushes, sets the permissions, syncs and closes the temporary file:
// it is then complete and durable but not yet in place (see Commit). On
// error the temporary file is removed. Closing twice does nothing.
func (f *File) Close() error {
	if f.closed || f.gone {
		return nil
	}
	err := f.bw.Flush()
	if err == nil {
		err = f.f.Chmod(f.perm)
	}
	if err == nil && !SkipSync {
		err = f.f.Sync()
	}
	if cerr := f.f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		f.gone = true
		os.Remove(f.f.Name())
		return err
	}
	f.closed = true
	return nil
}

// Abort removes the temporary file. It does nothing to a file already
// committed or aborted, so a deferred Abort is always safe.
func (f *File) Abort() {
	if f.gone {
		return
	}
	if !f.closed {
		f.f.Close()
	}
	os.Remove(f.f.Name())
	f.gone = true
}

// Commit closes each file still open (File.Close), then renames each over
// its target, in order, and syncs each folder involved once. If a close or
// a rename fails, the files not yet in place are aborted and the error
// returned; the files already renamed stay (each is complete).
func Commit(files ...*File) error {
	for i, f := range files {
		if err := f.Close(); err != nil {
			abort(files[i:])
			return err
		}
	}
	synced := make(map[string]bool)
	var dirs []string
	for i, f := range files {
		if f.gone {
			continue
		}
		if err := os.Rename(f.f.Name(), f.path); err != nil {
			abort(files[i:])
			return err
		}
		f.gone = true
		if d := filepath.Dir(f.path); !synced[d] {
			synced[d] = true
			dirs = append(dirs, d)
		}
	}
	for _, d := range dirs {
		if err := SyncDir(d); err != nil {
			return err
		}
	}
	return nil
}

func abort(files []*File) {
	for _, f := range files {
		f.Abort()
	}
}

// Write writes path atomically with permissions perm from what fill writes.
// On error nothing is left behind and the old file, if any, is untouched.
func Write(path string, perm os.FileMode, fill func(io.Writer) error) error {
	f, err := Create(path, perm)
	if err != nil {
		return err
	}
	if err := fill(f); err != nil {
		f.Abort()
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return Commit(f)
}

// WriteBytes writes data to path atomically with permissions perm.
func WriteBytes(path string, data []byte, perm os.FileMode) error {
	return Write(path, perm, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// SyncDir makes the renames and removals in dir durable. A file system
// that cannot sync a folder (os.ErrInvalid) is accepted.
func SyncDir(dir string) error {
	if SkipSync {
		return nil
	}
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, os.ErrInvalid) {
		return fmt.Errorf("sync %s: %w", dir, err)
	}
	return nil
}
