package main

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// checkOutput refuses an output path that names one of the inputs (the same
// file by path or, when it exists, by identity), so that a report never
// overwrites its own data.
func checkOutput(out string, inputs ...string) error {
	if out == "" {
		return nil
	}
	abs, err := filepath.Abs(out)
	if err != nil {
		return fmt.Errorf("-o: %w", err)
	}
	st, statErr := os.Stat(out)
	for _, in := range inputs {
		if in == "" {
			continue
		}
		ia, err := filepath.Abs(in)
		if err != nil {
			continue
		}
		same := ia == abs
		if !same && statErr == nil {
			if ist, err := os.Stat(in); err == nil {
				same = os.SameFile(st, ist)
			}
		}
		if same {
			return fmt.Errorf("-o %q is an input file; write the report elsewhere", out)
		}
	}
	return nil
}

// writeFileAtomic writes through fill into a temporary file in path's
// folder and renames it over path only when everything was written and
// synced, so that a failure (a full disk, say) leaves any old file as it was
// and no partial file behind.
func writeFileAtomic(path string, fill func(io.Writer) error) (err error) {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	bw := bufio.NewWriter(f)
	if err = fill(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return err
	}
	if err = f.Sync(); err != nil {
		return err
	}
	if err = f.Chmod(0o644); err != nil {
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	return os.Rename(tmp, path)
}
