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
) -> None:
    """Serve the JSON API on this machine, the store opened read-only.

    Example:

      partsel serve --port 8765
    """
    import uvicorn

    from partsel.web.app import make_app

    if host not in ("127.0.0.1", "localhost", "::1"):
        note(f"caution: listening on {host}: anyone who can reach it can read the store")
    uvicorn.run(make_app((ctx.find_root().obj or {}).get("store")), host=host, port=port,
                log_level="warning")
