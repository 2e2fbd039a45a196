"""Element kernels: vectorised over all elements of a kind, elements first in every array."""
from . import bar, beam, timoshenko

__all__ = ["bar", "beam", "timoshenko"]
