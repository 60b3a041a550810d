"""Review: the content fingerprint of a sheet and the state of each sign-off against it.

``fingerprint.py`` says what a signature vouches for, ``states.py`` compares each signed role with it,
``seal.py`` carries both onto the Sheet, ``sign.py`` writes a signature into an input file and
``status.py`` reports the sign-off state of many sheets for CI. ``diff.py`` compares two revisions'
records as facts, ``diff_words.py`` reports them for `calcsheet diff`, and ``earlier.py`` reads the
earlier side (a git revision or an older file) for it and for ``build --changes-since``.
"""
