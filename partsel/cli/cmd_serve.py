"""partsel serve: the local page and JSON API."""

from __future__ import annotations

import typer

from partsel.cli.app import app, note


@app.command("serve")
def serve_cmd(
    ctx: typer.Context,
    port: int = typer.Option(8765, "--port", help="TCP port to listen on."),
    host: str = typer.Option("127.0.0.1", "--host",
                             help="Address to bind (default loopback only)."),
    open_page: bool = typer.Option(False, "--open", help="Open the page in the web browser."),
) -> None:
    """Serve the local page and its JSON API, the store opened read-only.

    Views: /search, /part/PART, /substitutes, /inductor, /bank; JSON under /api/ (see the
    README). Example:

      partsel serve --port 8765 --open
    """
    import uvicorn

    from partsel.web.app import make_app

    web = make_app((ctx.find_root().obj or {}).get("store"))
    if not is_loopback(host):
        note(f"caution: listening on {host}, not only this machine: anyone who can reach it "
             "can read the store (the page has no login); use --host 127.0.0.1 to keep it "
             "local")
    shown = f"[{host}]" if ":" in host else host
    url = f"http://{'127.0.0.1' if host in ('0.0.0.0', '::') else shown}:{port}/"
    note(f"serving the page at {url} (Ctrl-C stops it)")
    if open_page:
        import threading
        import webbrowser
        threading.Timer(0.5, webbrowser.open, args=(url,)).start()
    uvicorn.run(web, host=host, port=port, log_level="warning")


def is_loopback(host: str) -> bool:
    """True for an address only this machine can reach (127.0.0.0/8, ::1, localhost)."""
    import ipaddress

    if host.strip().lower() == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False
