"""The version of symcirc, in one place (notes and sheets record it; `--version` shows it)."""

__version__ = "0.1.0"
