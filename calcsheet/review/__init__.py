"""Review: the content fingerprint of a sheet and the state of each sign-off against it.

``fingerprint.py`` says what a signature vouches for, ``states.py`` compares each signed role with it,
``seal.py`` carries both onto the Sheet, ``sign.py`` writes a signature into an input file and
``status.py`` reports the sign-off state of many sheets for CI. A later comparison of two revisions
belongs here too, beside them.
"""
