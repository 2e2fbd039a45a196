"""Closed forms used by the tests now live in largerot.closed_form."""
from largerot.closed_form import *  # noqa: F401,F403
