"""Start Streamlit on the workbench entry with ``st.navigation`` in charge of the pages.

Streamlit (1.3x-1.6x) treats a ``pages/`` folder beside the entry script as the old automatic
multipage layout and then runs a page script without the entry, so the navigation, the
sidebar and the page titles of ``ui/app.py`` would be skipped on a first visit to a page URL.
The package keeps its pages in ``ui/pages`` (as packaged), so this launcher marks the app as a
navigation app before Streamlit starts, then hands over to Streamlit's own command line.
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


def main(argv: list[str] | None = None) -> int:
    """Run ``streamlit <argv>`` in this process (``argv`` as for the ``streamlit`` command)."""
    from streamlit.runtime.pages_manager import PagesManager
    from streamlit.web import cli

    PagesManager.uses_pages_directory = False  # the entry calls st.navigation itself
    warm_up()
    sys.argv = ["streamlit", *(sys.argv[1:] if argv is None else argv)]
    return cli.main(prog_name="streamlit")


if __name__ == "__main__":
    sys.exit(main())
