"""Presentation mode: a review notebook served as a web page with live widgets (private).

Voilà runs the notebook in a kernel of its own and shows its outputs (figures, tables and the
widgets, which stay live) without the code cells. The server listens on 127.0.0.1 only and
asks for a token; the URL printed carries it.
"""

import secrets
import socket
import subprocess
import sys
from pathlib import Path

__all__ = ["presentation_command", "present"]


def _free_port():
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def presentation_command(notebook, *, port=None, token=None):
    """(argv, url) of a Voilà server for ``notebook`` on 127.0.0.1 with a token.

    Parameters
    ----------
    notebook : path-like
        The review notebook (.ipynb); it must exist.
    port : int, optional
        TCP port (default: a free one).
    token : str, optional
        Access token (default: 32 random hex digits).
    """
    path = Path(notebook)
    if path.suffix != ".ipynb" or not path.is_file():
        raise ValueError(f"notebook: no notebook file at '{path}' (expected an existing .ipynb)")
    port = _free_port() if port is None else int(port)
    if not 0 < port < 65536:
        raise ValueError(f"port: must be from 1 to 65535; got {port}")
    token = secrets.token_hex(16) if token is None else str(token)
    argv = [sys.executable, "-m", "voila", str(path.resolve()), "--no-browser",
            "--Voila.ip=127.0.0.1", f"--port={port}", "--Voila.port_retries=0",
            f"--token={token}", "--strip_sources=True", "--show_tracebacks=True",
            f"--Voila.root_dir={path.resolve().parent}"]
    url = f"http://127.0.0.1:{port}/?token={token}"
    return argv, url


def present(notebook, *, port=None, token=None):
    """Serve ``notebook`` until interrupted (Ctrl-C); print the URL to open. Returns the exit code."""
    argv, url = presentation_command(notebook, port=port, token=token)
    print(f"presenting {notebook} at {url}  (127.0.0.1 only; Ctrl-C to stop)", flush=True)
    proc = subprocess.Popen(argv, cwd=Path(notebook).resolve().parent)
    try:
        return proc.wait()
    except KeyboardInterrupt:
        proc.terminate()
        return proc.wait()
