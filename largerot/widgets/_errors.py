"""Callback errors go into the widget that raised them, never into a lost log."""
from __future__ import annotations

import functools
import logging
import traceback

__all__ = ["shown_in_widget", "show_error"]

log = logging.getLogger(__name__)


def show_error(widget, exc: BaseException) -> None:
    """Write ``exc`` with its traceback into ``widget.errors`` (an Output) and ``widget.error``."""
    text = "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
    log.debug("error shown in widget: %s", text)
    widget.error = f"{type(exc).__name__}: {exc}"
    widget.errors.append_stderr(text)
    widget.errors.layout.display = ""


def shown_in_widget(method):
    """Decorate a callback method so that an exception is shown in its widget."""

    @functools.wraps(method)
    def wrapper(self, *args, **kwargs):
        try:
            return method(self, *args, **kwargs)
        except Exception as exc:  # a callback must never lose its error
            show_error(self, exc)
            return None

    return wrapper
