package library

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"time"
)

// DefaultLockTimeout is how long a writer waits for the lock when
// Store.LockTimeout is zero.
const DefaultLockTimeout = 10 * time.Second

// lockPoll is the interval between attempts to take a busy lock.
const lockPoll = 15 * time.Millisecond

// fileLock is a held writer lock.
type fileLock struct{ f *os.File }

// acquireLock takes the exclusive writer lock of the library in dir,
// waiting up to timeout. It writes "pid N since TIME" into the lock file so
// that a writer that gives up can say who holds it. The lock file itself is
// never removed (removing flock files races with other lockers).
func acquireLock(dir string, timeout time.Duration, now func() time.Time) (*fileLock, error) {
	path := filepath.Join(dir, lockName)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("open lock: %w", err)
	}
	start := time.Now()
	for {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			break
		}
		if !errors.Is(err, syscall.EWOULDBLOCK) && !errors.Is(err, syscall.EINTR) {
			f.Close()
			return nil, fmt.Errorf("lock %s: %w", path, err)
		}
		if waited := time.Since(start); waited >= timeout {
			holder := readHolder(path)
			f.Close()
			return nil, &LockError{Path: path, Holder: holder, Waited: waited}
		}
		time.Sleep(lockPoll)
	}
	msg := fmt.Sprintf("pid %d since %s\n", os.Getpid(), now().UTC().Format(time.RFC3339))
	if err := f.Truncate(0); err == nil {
		f.WriteAt([]byte(msg), 0)
	}
	return &fileLock{f: f}, nil
}

// readHolder returns what the lock holder wrote, trimmed.
func readHolder(path string) string {
	b, err := os.ReadFile(path)
	if err != nil {
		return ""
	}
	return strings.TrimSpace(string(b))
}

// release drops the lock. The PID line is left in place; it is only read
// when the lock is busy, and then it names the current holder.
func (l *fileLock) release() {
	if l == nil || l.f == nil {
		return
	}
	syscall.Flock(int(l.f.Fd()), syscall.LOCK_UN)
	l.f.Close()
	l.f = nil
}

// tryLockFree reports whether nobody holds the writer lock right now (used
// by a read-only verify to tell leftovers from writes in progress). It
// takes and drops the lock without waiting, and without writing to it.
func tryLockFree(dir string) bool {
	f, err := os.OpenFile(filepath.Join(dir, lockName), os.O_RDONLY, 0)
	if err != nil {
		return true
	}
	defer f.Close()
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		return false
	}
	syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
	return true
}
