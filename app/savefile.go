package app

import (
	"errors"
	"sync"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/storage/repository"
)

// The toolkit's save dialog hands its callback a writer it has already
// opened on the chosen file, which creates the file, or empties it when it
// exists (after an "overwrite?" question that does not know the file is,
// say, the unit's own database). The program never writes through that
// writer: it only wants the path, and writes its outputs through
// workspace.Output and store.Backup, which refuse to replace a database and
// replace other files only whole. So the "file" scheme is wrapped in a
// repository whose writers open the file only when first written to: a
// writer closed without a write leaves the chosen file exactly as it was,
// or absent.

// lazyFiles wraps the toolkit's file repository; every call but Writer is
// passed through.
type lazyFiles struct {
	inner repository.Repository
}

// useLazyFileWriters replaces the registered "file" repository with one
// whose writers open their file on first write. Call it after the toolkit
// app exists (its driver registers the file repository).
func useLazyFileWriters() {
	inner, err := repository.ForScheme("file")
	if err != nil {
		return
	}
	if _, done := inner.(*lazyFiles); done {
		return
	}
	repository.Register("file", &lazyFiles{inner: inner})
}

var errNotSupported = errors.New("the file repository does not support this")

func (l *lazyFiles) Exists(u fyne.URI) (bool, error)               { return l.inner.Exists(u) }
func (l *lazyFiles) Reader(u fyne.URI) (fyne.URIReadCloser, error) { return l.inner.Reader(u) }
func (l *lazyFiles) CanRead(u fyne.URI) (bool, error)              { return l.inner.CanRead(u) }
func (l *lazyFiles) Destroy(scheme string)                         { l.inner.Destroy(scheme) }

// Writer returns a writer that opens (creates or empties) u only when
// first written to.
func (l *lazyFiles) Writer(u fyne.URI) (fyne.URIWriteCloser, error) {
	w, ok := l.inner.(repository.WritableRepository)
	if !ok {
		return nil, errNotSupported
	}
	return &lazyWriter{uri: u, open: func() (fyne.URIWriteCloser, error) { return w.Writer(u) }}, nil
}

func (l *lazyFiles) CanWrite(u fyne.URI) (bool, error) {
	if w, ok := l.inner.(repository.WritableRepository); ok {
		return w.CanWrite(u)
	}
	return false, nil
}

func (l *lazyFiles) Delete(u fyne.URI) error {
	if w, ok := l.inner.(repository.WritableRepository); ok {
		return w.Delete(u)
	}
	return errNotSupported
}

func (l *lazyFiles) Appender(u fyne.URI) (fyne.URIWriteCloser, error) {
	if a, ok := l.inner.(repository.AppendableRepository); ok {
		return a.Appender(u)
	}
	return nil, errNotSupported
}

func (l *lazyFiles) CanList(u fyne.URI) (bool, error) {
	if x, ok := l.inner.(repository.ListableRepository); ok {
		return x.CanList(u)
	}
	return false, nil
}

func (l *lazyFiles) List(u fyne.URI) ([]fyne.URI, error) {
	if x, ok := l.inner.(repository.ListableRepository); ok {
		return x.List(u)
	}
	return nil, errNotSupported
}

func (l *lazyFiles) CreateListable(u fyne.URI) error {
	if x, ok := l.inner.(repository.ListableRepository); ok {
		return x.CreateListable(u)
	}
	return errNotSupported
}

func (l *lazyFiles) Parent(u fyne.URI) (fyne.URI, error) {
	if h, ok := l.inner.(repository.HierarchicalRepository); ok {
		return h.Parent(u)
	}
	return repository.GenericParent(u)
}

func (l *lazyFiles) Child(u fyne.URI, component string) (fyne.URI, error) {
	if h, ok := l.inner.(repository.HierarchicalRepository); ok {
		return h.Child(u, component)
	}
	return repository.GenericChild(u, component)
}

func (l *lazyFiles) DeleteAll(u fyne.URI) error {
	if d, ok := l.inner.(repository.DeleteAllRepository); ok {
		return d.DeleteAll(u)
	}
	return errNotSupported
}

func (l *lazyFiles) Copy(src, dst fyne.URI) error {
	if c, ok := l.inner.(repository.CopyableRepository); ok {
		return c.Copy(src, dst)
	}
	return errNotSupported
}

func (l *lazyFiles) Move(src, dst fyne.URI) error {
	if m, ok := l.inner.(repository.MovableRepository); ok {
		return m.Move(src, dst)
	}
	return errNotSupported
}

// lazyWriter opens its file on the first Write.
type lazyWriter struct {
	uri  fyne.URI
	open func() (fyne.URIWriteCloser, error)

	mu  sync.Mutex
	w   fyne.URIWriteCloser
	err error
}

func (w *lazyWriter) URI() fyne.URI { return w.uri }

func (w *lazyWriter) Write(p []byte) (int, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.w == nil && w.err == nil {
		w.w, w.err = w.open()
	}
	if w.err != nil {
		return 0, w.err
	}
	return w.w.Write(p)
}

// Close closes the file if it was opened; otherwise nothing was touched.
func (w *lazyWriter) Close() error {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.w == nil {
		return nil
	}
	return w.w.Close()
}
