"""Markers for the reference checks (kept here so pyproject.toml stays untouched)."""


def pytest_configure(config):
    config.addinivalue_line(
        "markers", "reference: compares calcsheet with an outside oracle such as sympy.dsolve (slower)"
    )
