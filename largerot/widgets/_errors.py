"""Callback errors go into the widget that raised them, never into a lost log.

An error is shown as one line (``ValueError: `scale` must be positive, got -1.0.``)
with the traceback folded behind a "details" toggle (an HTML ``<details>`` element,
which opens and closes in the browser without the kernel).
"""
from __future__ import annotations

import functools
import html
import logging
import traceback

import ipywidgets as w

__all__ = ["ErrorBox", "shown_in_widget", "show_error", "one_line"]

log = logging.getLogger(__name__)

#: Longest one-line message shown before it is cut (the whole text is in the details).
MAX_LINE = 300


def one_line(exc: BaseException) -> str:
    """``"Kind: message"`` on one line, cut at :data:`MAX_LINE` characters.

    >>> one_line(ValueError("bad\\nvalue"))
    'ValueError: bad value'
    """
    text = " ".join(f"{type(exc).__name__}: {exc}".split())
    return text if len(text) <= MAX_LINE else text[:MAX_LINE - 1] + "…"


class ErrorBox(w.HTML):
    """One clear line in red, the traceback behind "details"; hidden when empty.

    Attributes
    ----------
    message : str
        The line shown ('' when clear).
    details : str
        The traceback behind the toggle.
    """

    def __init__(self, **kwargs) -> None:
        super().__init__("", layout=w.Layout(display="none"), **kwargs)
        self.add_class("largerot-error")
        self.message = ""
        self.details = ""

    def show(self, message: str, details: str = "") -> None:
        """Show ``message`` (one line) and, folded, ``details``."""
        self.message, self.details = message, details
        body = (f"<span style='color:#b03a2e;font-weight:bold'>{html.escape(message)}</span>")
        if details:
            body += ("<details style='margin-top:2px'><summary style='cursor:pointer;color:#555'>"
                     "details</summary><pre style='font-size:11px;margin:2px 0;white-space:pre-wrap'>"
                     f"{html.escape(details)}</pre></details>")
        self.value = f"<div style='padding:3px 6px'>{body}</div>"
        self.layout.display = ""
        self.layout.border = "1px solid #b03a2e"

    def show_exception(self, exc: BaseException) -> str:
        """Show an exception: its one line, its traceback behind details. Returns the line."""
        text = "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
        line = one_line(exc)
        self.show(line, text)
        return line

    def clear(self) -> None:
        """Hide the box."""
        self.message = self.details = ""
        self.value = ""
        self.layout.display = "none"


def show_error(widget, exc: BaseException) -> None:
    """Show ``exc`` in ``widget.errors`` (an :class:`ErrorBox`) and set ``widget.error``."""
    line = widget.errors.show_exception(exc)
    log.debug("error shown in widget: %s", widget.errors.details)
    widget.error = line


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
