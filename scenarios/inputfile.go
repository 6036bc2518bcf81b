package scenarios

import (
	"crypto/sha256"
	"errors"
	"fmt"
	"hash"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
)

// Every file a scenario names is opened here, so that each is held to the
// same rules: it lies inside the scenario's folder (a symbolic link is
// followed only when it stays inside), it is a regular file (a folder, a
// named pipe, a device or a socket is refused before it is opened, so a
// pipe cannot hang the run), its size is checked before it is read and a
// limited reader stops one that grows while it is read, and the SHA-256 of
// its bytes is taken as it is read, for the report's run details.

// Sentinel errors of openInput, for errors.Is.
var (
	// errNotRegular: the name is a folder, a pipe, a device or a socket.
	errNotRegular = errors.New("not a regular file")
	// errTooLarge: the file is larger than its kind of file may be.
	errTooLarge = errors.New("file too large")
	// errOutside: a symbolic link leads outside the scenario's folder.
	errOutside = errors.New("outside the scenario's folder")
)

// inputError is why a file could not be opened, with its name.
type inputError struct {
	name string
	err  error
	// detail says what the file is (for errNotRegular) or how big (for
	// errTooLarge).
	detail string
	limit  int64
}

func (e *inputError) Error() string { return e.name + ": " + e.describe() }
func (e *inputError) Unwrap() error { return e.err }

// describe says what is wrong in words for a planner, without the name.
func (e *inputError) describe() string {
	switch {
	case errors.Is(e.err, fs.ErrNotExist):
		return "file not found"
	case errors.Is(e.err, errNotRegular):
		return fmt.Sprintf("is %s, not a file; wearplan reads only regular files", e.detail)
	case errors.Is(e.err, errTooLarge):
		return fmt.Sprintf("is %s; this kind of file is at most %d bytes", e.detail, e.limit)
	case errors.Is(e.err, errOutside):
		return "is a symbolic link to a place outside the scenario's folder; copy the file into the folder"
	case errors.Is(e.err, fs.ErrPermission):
		return "cannot be read (permission denied)"
	}
	return fmt.Sprintf("cannot be read: %v", e.err)
}

// describeOpenError says in words why name could not be read.
func describeOpenError(err error) string {
	var ie *inputError
	if errors.As(err, &ie) {
		return ie.describe()
	}
	return fmt.Sprintf("cannot be read: %v", err)
}

// kindOf names a file mode that is not a regular file.
func kindOf(m fs.FileMode) string {
	switch {
	case m.IsDir():
		return "a folder"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a device"
	case m&fs.ModeSymlink != 0:
		return "a symbolic link that leads nowhere"
	}
	return "not a regular file"
}

// openInput opens name in fsys for reading after checking that it is a
// regular file of at most limit bytes (no limit when limit <= 0). The
// reader it returns fails with errTooLarge past limit and records the
// file's digest in digests (when not nil) once read to the end.
func openInput(fsys fs.FS, name string, limit int64, digests map[string]string) (*inputReader, error) {
	if f, ok := fsys.(*folderFS); ok && f.escapes(name) {
		return nil, &inputError{name: name, err: errOutside}
	}
	st, err := fs.Stat(fsys, name)
	if err != nil {
		return nil, &inputError{name: name, err: err}
	}
	if !st.Mode().IsRegular() {
		return nil, &inputError{name: name, err: errNotRegular, detail: kindOf(st.Mode())}
	}
	if limit > 0 && st.Size() > limit {
		return nil, &inputError{name: name, err: errTooLarge, detail: fmt.Sprintf("%d bytes", st.Size()), limit: limit}
	}
	f, err := fsys.Open(name)
	if err != nil {
		return nil, &inputError{name: name, err: err}
	}
	// The file may have been swapped between the two looks.
	if st, err = f.Stat(); err != nil || !st.Mode().IsRegular() {
		f.Close()
		if err == nil {
			err = errNotRegular
		}
		return nil, &inputError{name: name, err: err, detail: "not a regular file"}
	}
	r := &inputReader{f: f, name: name, size: st.Size(), limit: limit, sum: sha256.New(), digests: digests}
	return r, nil
}

// readInput reads a whole file through openInput.
func readInput(fsys fs.FS, name string, limit int64, digests map[string]string) ([]byte, error) {
	r, err := openInput(fsys, name, limit, digests)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	return io.ReadAll(r)
}

// inputReader reads an input file, failing past its limit, and takes the
// file's digest on the way.
type inputReader struct {
	f    fs.File
	name string
	// size is the file's size when it was opened.
	size    int64
	limit   int64
	n       int64
	sum     hash.Hash
	digests map[string]string
}

func (r *inputReader) Read(p []byte) (int, error) {
	n, err := r.f.Read(p)
	r.n += int64(n)
	r.sum.Write(p[:n])
	if r.limit > 0 && r.n > r.limit {
		return n, &inputError{name: r.name, err: errTooLarge, detail: fmt.Sprintf("more than %d bytes", r.limit), limit: r.limit}
	}
	if err == io.EOF && r.digests != nil {
		r.digests[r.name] = fmt.Sprintf("%x", r.sum.Sum(nil))
	}
	return n, err
}

func (r *inputReader) Close() error { return r.f.Close() }

// fileDigest returns the SHA-256 of a file, streamed.
func fileDigest(fsys fs.FS, name string) (string, error) {
	d := map[string]string{}
	r, err := openInput(fsys, name, 0, d)
	if err != nil {
		return "", err
	}
	defer r.Close()
	if _, err := io.Copy(io.Discard, r); err != nil {
		return "", err
	}
	return d[name], nil
}

// folderFS is a scenario's folder on disk. It opens files through an
// os.Root, which refuses paths and symbolic links that lead outside the
// folder; escapes tells such a link apart beforehand, for a clear message.
// Opening never blocks: a named pipe put in the place of a file after the
// check is opened without waiting for a writer, and then refused.
type folderFS struct {
	root *os.Root
	dir  string
}

// openFolder opens the folder dir for reading the files a scenario names.
func openFolder(dir string) (*folderFS, error) {
	root, err := os.OpenRoot(dir)
	if err != nil {
		return nil, err
	}
	return &folderFS{root: root, dir: dir}, nil
}

func (f *folderFS) Close() error { return f.root.Close() }

func (f *folderFS) Open(name string) (fs.File, error) {
	if !fs.ValidPath(name) {
		return nil, &fs.PathError{Op: "open", Path: name, Err: fs.ErrInvalid}
	}
	file, err := f.root.OpenFile(filepath.FromSlash(name), os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	return file, nil
}

func (f *folderFS) Stat(name string) (fs.FileInfo, error) {
	if !fs.ValidPath(name) {
		return nil, &fs.PathError{Op: "stat", Path: name, Err: fs.ErrInvalid}
	}
	return f.root.Stat(filepath.FromSlash(name))
}

// escapes says whether name, with every symbolic link on its way followed,
// lies outside the folder.
func (f *folderFS) escapes(name string) bool {
	dir, err := filepath.EvalSymlinks(f.dir)
	if err != nil {
		return false
	}
	real, err := filepath.EvalSymlinks(filepath.Join(f.dir, filepath.FromSlash(name)))
	if err != nil {
		// A link to nowhere, or no file: os.Root tells which.
		return false
	}
	rel, err := filepath.Rel(dir, real)
	return err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator))
}
