"""Reading what the engineer wrote: TOML, expressions, quantities and units."""
