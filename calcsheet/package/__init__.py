"""Packages: many sheets that share a design basis and pass results to each other (``package.toml``).

A package sits above the single-sheet pipeline: it reads the package file (``package_file.py``), finds
which sheets use which basis values and which other sheets' results (``references.py``), orders the sheets
so that every sheet is built after those it uses, fills each sheet's references into its raw input before
the loader checks it (``resolve.py``, ``results.py``), and writes the register (``register.py``). A sheet
outside any package builds exactly as before.
"""
