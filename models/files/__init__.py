"""System files in and derived tables out: the param objects, reading and checking files, exports (ECSV, LaTeX), provenance and rounding."""
