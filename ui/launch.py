"""Start Streamlit on the workbench entry with ``st.navigation`` in charge of the pages.

Streamlit (1.3x-1.6x) treats a ``pages/`` folder beside the entry script as the old automatic
multipage layout and then runs a page script without the entry, so the navigation, the
sidebar and the page titles of ``ui/app.py`` would be skipped on a first visit to a page URL.
The package keeps its pages in ``ui/pages`` (as packaged), so this launcher marks the app as a
navigation app before Streamlit starts, then hands over to Streamlit's own command line.
"""

from __future__ import annotations

import sys


def main(argv: list[str] | None = None) -> int:
    """Run ``streamlit <argv>`` in this process (``argv`` as for the ``streamlit`` command)."""
    from streamlit.runtime.pages_manager import PagesManager
    from streamlit.web import cli

    PagesManager.uses_pages_directory = False  # the entry calls st.navigation itself
    sys.argv = ["streamlit", *(sys.argv[1:] if argv is None else argv)]
    return cli.main(prog_name="streamlit")


if __name__ == "__main__":
    sys.exit(main())
