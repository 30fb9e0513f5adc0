"""Files: atomic output and the HDF5 (netCDF-4) layout of a result."""
