"""The format-free document: what a sheet says, in what order, decided once for every format."""
