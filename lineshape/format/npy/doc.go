// Package npy reads and writes NumPy .npy arrays of little-endian float32
// ('<f4') or float64 ('<f8') values in C order, the form statemix uses for
// spectrum-image cubes of shape (height, width, channels) and for maps.
//
// # Format
//
// A .npy file is the magic "\x93NUMPY", a format version (1.0, 2.0 and 3.0
// are read; 1.0 is written, 2.0 only when the header needs it), a header
// length, a Python literal dictionary
//
//	{'descr': '<f8', 'fortran_order': False, 'shape': (64, 64, 401), }
//
// padded with spaces to a multiple of 64 bytes, and the values. Big-endian,
// integer, complex and structured types are refused, and so is
// fortran_order True (save such arrays with numpy.ascontiguousarray).
// Hostile headers (huge shapes, headers longer than 64 KiB, deep nesting,
// data shorter or longer than the shape says) are errors, never panics or
// large allocations: Open checks the shape against the file size, and Read
// grows its buffer only as data arrives.
//
// # Reading in tiles
//
// Open returns a Reader that reads by io.ReaderAt. For a cube of shape
// (H, W, C), pixel p = row*W + col holds C values starting at element p*C,
// and ReadRows(dst, first, n) reads the spectra of pixels first..first+n-1
// into dst without loading the rest. ReadFile loads a whole array. Values
// come back as float64, NaN and infinities included.
//
// # Sidecar
//
// A cube's energy axis is described by <name>.json beside <name>.npy
// (DESIGN.md): start_ev and step_ev in eV, mode "derivative" or "direct",
// pixel_um in µm and, optionally, modulation_ev: the peak-to-peak
// modulation in eV a derivative cube was recorded with, which Sidecar.Meta
// hands on as lineshape.Meta.ModulationEV. ReadSidecar reads and validates
// it (a missing sidecar is a *lineshape.InputError naming its path),
// CheckShape checks it against the cube's channel count, and OpenCube does
// both.
//
// # Errors
//
// Bad file content is reported as a *lineshape.InputError naming the file
// (and, for sidecar JSON syntax errors, the line). Writes are atomic:
// WriteFile and WriteSidecar write a temporary file, sync it and rename it.
package npy
