"""numba kernels (plain arrays in, plain arrays out) and the method registry that wraps them."""

from simulate.kernels.methods import METHODS, NEWMARK_SCHEMES, Method, Newmark, StateSpace, make_method

__all__ = ["METHODS", "NEWMARK_SCHEMES", "Method", "Newmark", "StateSpace", "make_method"]
