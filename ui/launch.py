"""Start Streamlit on the workbench entry, with the engine imported before the first visitor.

The page scripts live in ``ui/screens`` (not ``ui/pages``, which Streamlit would take for its
older automatic multipage layout); ``ui/app.py`` builds the navigation with ``st.navigation``.
"""

from __future__ import annotations

import sys


def warm_up() -> None:
    """Import the engine, the chart library and the unit registry before the first visitor.

    The first page of the first session otherwise pays for these imports (about 1.5 s).
    """
    import altair  # noqa: F401
    import pandas  # noqa: F401

    from sizing import model, units, views  # noqa: F401

    units.registry()
    data, folder = views.load_demo()
    from sizing.case import parse_case

    views.summary(parse_case(data, folder))


def follow_parent() -> None:
    """Make this server end when the process that started it (``sizing app``) ends.

    ``sizing app`` runs the server as a child process; a SIGTERM (or SIGKILL) to ``sizing app``
    alone would otherwise leave the server running and its port taken.  On Linux the kernel
    sends this process SIGTERM when its parent dies (``PR_SET_PDEATHSIG``), which Streamlit
    handles by shutting down cleanly; SIGINT from a terminal reaches both processes anyway.
    Elsewhere this does nothing.
    """
    import ctypes
    import ctypes.util
    import os
    import signal

    parent = os.getppid()
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6", use_errno=True)
        libc.prctl(1, signal.SIGTERM, 0, 0, 0)  # 1 = PR_SET_PDEATHSIG
    except (OSError, AttributeError):  # not Linux: nothing to arrange
        return
    if os.getppid() != parent:  # the parent died before the request took effect
        os.kill(os.getpid(), signal.SIGTERM)


def main(argv: list[str] | None = None) -> int:
    """Run ``streamlit <argv>`` in this process (``argv`` as for the ``streamlit`` command)."""
    from streamlit.web import cli

    follow_parent()
    warm_up()
    sys.argv = ["streamlit", *(sys.argv[1:] if argv is None else argv)]
    return cli.main(prog_name="streamlit")


if __name__ == "__main__":
    sys.exit(main())
