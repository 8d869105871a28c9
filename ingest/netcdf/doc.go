// Package netcdf reads netCDF classic files (the CDF-1 "classic" and
// CDF-2 "64-bit offset" variants of netCDF-3) and, on top of that, balloon
// soundings stored one flight per file in the high-resolution layout
// described by Mapping (format name "netcdf-sonde").
//
// The classic layer (Open, File, Var, Attr) follows the published netCDF
// classic format specification: a big-endian header (magic, number of
// records, dimension list, global attributes, variable list) followed by
// the fixed-size variables and then the record variables, interleaved one
// record at a time, each slab padded to a multiple of 4 bytes. It reads
// through an io.ReaderAt and the file size, and checks every count, length
// and offset in the header against that size before allocating, so a
// damaged or hostile file yields a *FormatError, never a panic or a huge
// allocation. NetCDF-4 (HDF5) and CDF-5 files are not classic files and
// are rejected with ErrNotClassic.
//
// The sounding layer (Read) maps the variables of one flight onto a
// sounding.Sounding in SI units; see Mapping and Read for the rules.
package netcdf
