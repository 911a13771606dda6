// Package atomicfile writes output files so that readers never see a
// partial one: the bytes go to a temporary file in the same folder, which
// is synced and renamed over the path at the end. A failed or interrupted
// run leaves any earlier file at the path untouched. The model file, the
// sweep folder, predictions and reports are all written through it.
package atomicfile

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
)

// File is an output file written as a stream and put in place by Commit.
type File struct {
	*os.File
	path string
	done bool
}

// Create starts a File for path. Call Commit when every byte is written,
// and defer Abort, which removes the temporary file unless Commit put it
// in place. A missing folder is an error that names it.
func Create(path string) (*File, error) {
	if fi, err := os.Stat(path); err == nil && fi.IsDir() {
		return nil, fmt.Errorf("writing %s: it is a folder", path)
	}
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		if fi, serr := os.Stat(dir); serr != nil || !fi.IsDir() {
			return nil, fmt.Errorf("writing %s: the folder %s does not exist", path, dir)
		}
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return nil, fmt.Errorf("writing %s: cannot create a file in %s: %w", path, dir, err)
	}
	return &File{File: f, path: path}, nil
}

// Commit syncs the temporary file and renames it over the path.
func (a *File) Commit() error {
	err := a.Sync()
	if err == nil {
		err = a.Chmod(0o644)
	}
	if cerr := a.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(a.Name(), a.path)
	}
	if err != nil {
		os.Remove(a.Name())
		return fmt.Errorf("writing %s: %w", a.path, err)
	}
	a.done = true
	return nil
}

// Abort removes the temporary file unless Commit put it in place.
func (a *File) Abort() {
	if !a.done {
		a.Close()
		os.Remove(a.Name())
	}
}

// Write writes data to path through a temporary file and a rename.
func Write(path string, data []byte) error {
	f, err := Create(path)
	if err != nil {
		return err
	}
	defer f.Abort()
	if _, err := f.Write(data); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return f.Commit()
}

// WriteWith writes what write produces to path through a temporary file
// and a rename; an error from write leaves nothing behind.
func WriteWith(path string, write func(f *os.File) error) error {
	f, err := Create(path)
	if err != nil {
		return err
	}
	defer f.Abort()
	if err := write(f.File); err != nil {
		return err
	}
	return f.Commit()
}
