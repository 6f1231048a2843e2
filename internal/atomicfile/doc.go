// Package atomicfile writes files so that a reader, or the file system
// after a crash, sees either the old file or the complete new one, never a
// part of it.
package atomicfile
