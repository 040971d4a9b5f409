"""Exact algebra: polynomials and rational functions over python-flint or sympy, conversion
from and to sympy, the exact identity decision, and factoring.

Every later stage (engine, quantities, forms, claims, analyses) computes through this
package; it imports nothing from them. `SYMCIRC_POLYNOMIALS=sympy` selects sympy's rings.
"""
