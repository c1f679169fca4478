// Package export writes whirlfit's results to files and streams: the rpm
// track and the per-step summary as CSV, reports as JSON. Files are written
// atomically: a temporary file in the target folder, closed and checked,
// then renamed into place, so a reader never sees half a file.
package export

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// ErrExists is returned when the target file exists and overwriting was not
// allowed.
var ErrExists = errors.New("file exists (use --force to overwrite)")

// WriteFileAtomic creates path with the bytes that write produces. Unless
// force is set, an existing file is left alone and ErrExists is returned
// (wrapped with the path). On any error the target is untouched and the
// temporary file removed.
func WriteFileAtomic(path string, force bool, write func(w io.Writer) error) (err error) {
	if !force {
		if _, err := os.Lstat(path); err == nil {
			return fmt.Errorf("%s: %w", path, ErrExists)
		} else if !errors.Is(err, fs.ErrNotExist) {
			return err
		}
	}
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err = write(tmp); err != nil {
		return err
	}
	if err = tmp.Sync(); err != nil {
		return err
	}
	if err = tmp.Close(); err != nil {
		return err
	}
	if err = os.Chmod(tmp.Name(), 0o644); err != nil {
		return err
	}
	if !force {
		// Link fails if the target appeared meanwhile; rename would not.
		if err = os.Link(tmp.Name(), path); err != nil {
			if errors.Is(err, fs.ErrExist) {
				err = fmt.Errorf("%s: %w", path, ErrExists)
			}
			os.Remove(tmp.Name())
			return err
		}
		return os.Remove(tmp.Name())
	}
	return os.Rename(tmp.Name(), path)
}
