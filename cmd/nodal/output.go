package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// writeTo sends what fill writes to path, or to stdout when path is "" or
// "-". A file is written atomically: into a temporary file in the same
// folder, then renamed over the target, so a failed run never leaves a
// half-written file. It refuses to overwrite any of the protected input
// files.
func writeTo(e *env, path string, protect []string, fill func(w io.Writer) error) error {
	if path == "" || path == "-" {
		bw := bufio.NewWriter(e.stdout)
		if err := fill(bw); err != nil {
			return err
		}
		return bw.Flush()
	}
	if err := refuseInput(path, protect); err != nil {
		return err
	}
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	tmpName := tmp.Name()
	ok := false
	defer func() {
		if !ok {
			tmp.Close()
			os.Remove(tmpName)
		}
	}()
	bw := bufio.NewWriter(tmp)
	if err := fill(bw); err != nil {
		return err
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	if err := os.Chmod(tmpName, 0o644); err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	if err := os.Rename(tmpName, path); err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	ok = true
	return nil
}

// refuseInput returns an error when path names the same file as one of the
// inputs.
func refuseInput(path string, inputs []string) error {
	out, err := os.Stat(path)
	absOut, _ := filepath.Abs(path)
	for _, in := range inputs {
		if in == "" || in == "-" {
			continue
		}
		absIn, _ := filepath.Abs(in)
		if absIn == absOut {
			return fmt.Errorf("refusing to overwrite the input file %s", in)
		}
		if err == nil {
			if st, e2 := os.Stat(in); e2 == nil && os.SameFile(st, out) {
				return fmt.Errorf("refusing to overwrite the input file %s", in)
			}
		}
	}
	return nil
}

// writeJSON writes v as indented JSON with a trailing newline.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
