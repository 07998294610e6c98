"""Apply a style only inside a context, so nothing leaks between figures."""

from __future__ import annotations

import contextlib
from typing import Iterator

from figspec.spec.style import Style


@contextlib.contextmanager
def styled(style: Style) -> Iterator[None]:
    """matplotlib settings of ``style`` from a clean default base, restored on exit."""
    import matplotlib as mpl

    with mpl.rc_context():
        mpl.rcdefaults()
        mpl.rcParams.update(style.rc())
        yield
