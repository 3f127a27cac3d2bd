"""``sizing app [--port P] [--headless]``: start the Streamlit workbench on 127.0.0.1."""

from __future__ import annotations

import subprocess
import sys
from importlib.util import find_spec
from pathlib import Path

from ..errors import InputError


def register(sub) -> None:
    p = sub.add_parser("app", help="start the Streamlit workbench in the browser (127.0.0.1)",
                       description="Start the workbench: build a case, see the dose, fit lab data and "
                                   "download the plan, in the browser.")
    p.add_argument("--port", type=int, default=8501, metavar="P", help="port on 127.0.0.1 (default 8501)")
    p.add_argument("--headless", action="store_true", help="do not open a browser")
    p.set_defaults(func=run)


def entry_script():
    """Return the path of the installed workbench entry (``ui/app.py``)."""
    spec = find_spec("ui")
    locations = list(spec.submodule_search_locations or []) if spec else []
    for folder in locations:
        p = Path(folder) / "app.py"
        if p.is_file():
            return p
    raise InputError("app: the workbench files (ui/app.py) are not installed; reinstall the package")


def command(port: int, headless: bool) -> list[str]:
    """Return the ``streamlit run`` command line for the workbench.

    Streamlit runs through ``ui.launch``, which imports the engine before the first visitor.
    """
    return [sys.executable, "-m", "ui.launch", "run", str(entry_script()),
            "--server.address", "127.0.0.1", "--server.port", str(port),
            "--server.headless", "true" if headless else "false",
            "--browser.gatherUsageStats", "false", "--server.maxUploadSize", "5", "--client.toolbarMode", "minimal"]


def run(args) -> int:
    if not 0 < args.port < 65536:
        raise InputError(f"--port: expected a port number from 1 to 65535, got {args.port}")
    print(f"sizing workbench on http://127.0.0.1:{args.port} (Ctrl+C to stop)", flush=True)
    try:
        return subprocess.call(command(args.port, args.headless))
    except KeyboardInterrupt:
        return 0
