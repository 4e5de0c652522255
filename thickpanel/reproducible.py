"""Reproducible outputs: the ``SOURCE_DATE_EPOCH`` convention.

When the environment variable ``SOURCE_DATE_EPOCH`` holds a whole number of seconds since
1970-01-01 UTC (the reproducible-builds.org specification, "SOURCE_DATE_EPOCH", 2017), every
time stamp thickpanel writes into a file (the STEP header's ``FILE_NAME`` time) is that time, and
the report leaves out stage run times, so the same input gives the same bytes. ``thickpanel build
--reproducible`` sets it to 0 when it is not set.
"""

from __future__ import annotations

import os
import re
import time

from .errors import ExportError

__all__ = ["source_date_epoch", "iso_timestamp", "pin_step_timestamp"]

_STEP_TIME = re.compile(rb"(FILE_NAME\('(?:[^']|'')*',\s*')[0-9T:\-+.]*(')")


def source_date_epoch() -> int | None:
    """The pinned time in seconds, or None when ``SOURCE_DATE_EPOCH`` is not set.

    Raises
    ------
    ExportError
        When the variable is set but is not a whole number of seconds >= 0 (the specification
        asks tools to fail rather than guess).
    """
    raw = os.environ.get("SOURCE_DATE_EPOCH")
    if raw is None or raw == "":
        return None
    if not raw.isdigit():
        raise ExportError(f"SOURCE_DATE_EPOCH = {raw!r} must be a whole number of seconds since 1970-01-01 UTC")
    return int(raw)


def iso_timestamp(epoch: int) -> str:
    """``YYYY-MM-DDTHH:MM:SS`` (UTC) of ``epoch`` seconds, as STEP headers write it."""
    return time.strftime("%Y-%m-%dT%H:%M:%S", time.gmtime(epoch))


def pin_step_timestamp(data: bytes) -> bytes:
    """``data`` (a STEP file) with its ``FILE_NAME`` time set to ``SOURCE_DATE_EPOCH`` when given."""
    epoch = source_date_epoch()
    if epoch is None:
        return data
    stamp = iso_timestamp(epoch).encode("ascii")
    return _STEP_TIME.sub(lambda m: m.group(1) + stamp + m.group(2), data, count=1)
