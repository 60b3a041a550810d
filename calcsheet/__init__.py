"""calcsheet: first-order linear models turned into checked calculation sheets."""

__version__ = "0.1.0"
