"""``lotwise serve``: the local web page and its JSON API (:mod:`lotwise.web`)."""

from __future__ import annotations

import sys
from typing import Optional

import typer

from . import app
from lotwise.core.quantities import parse_count


@app.command()
def serve(
    port: str = typer.Option("8765", "--port", help="TCP port (0: any free port)."),
    host: Optional[str] = typer.Option(None, "--host", help="Address to listen on (default 127.0.0.1, this machine only); another address serves the network, with a warning."),
    open_page: bool = typer.Option(False, "--open", help="Open the page in the default browser."),
):
    """Serve the plan page for negotiation meetings and reviews on this machine."""
    from lotwise.web.app import is_loopback, make_server

    pt = parse_count(port, "--port", minimum=0, maximum=65535)
    explicit = host is not None
    host = "127.0.0.1" if host is None else host.strip()
    if explicit and not is_loopback(host):
        print(f"lotwise: warning: --host {host} serves every machine that can reach this one; "
              "the page has no login. Use it on a network you trust.", file=sys.stderr)
    server = make_server(host, pt, remote=explicit)
    shown = f"[{host}]" if ":" in host else host
    url = f"http://{shown}:{server.effective_port}/"
    typer.echo(f"lotwise serve: {url}  (Ctrl+C to stop)")
    if open_page:
        import threading
        import webbrowser

        threading.Timer(0.5, webbrowser.open, args=(url,)).start()
    try:
        server.run()
    finally:
        server.close()
