"""The starlette application: routes, read-only store, plain-text errors."""

from __future__ import annotations

import math
from typing import Any

from starlette.applications import Starlette
from starlette.requests import Request
from starlette.responses import JSONResponse, PlainTextResponse
from starlette.routing import Route

from partsel import units
from partsel.errors import PartselError
from partsel.web.keys import find_row

_QUANTITIES = {"below": "ohm", "above": "ohm", "bias": "V", "mount_l": "H",
               "min_voltage": "V"}


def _clean(v: Any) -> Any:
    """A JSON-safe value: NaN and infinities become null, numpy scalars plain numbers."""
    if hasattr(v, "item"):
        v = v.item()
    if isinstance(v, float) and not math.isfinite(v):
        return None
    return v


def search_kwargs(q: dict[str, str]) -> dict[str, Any]:
    """The query string of a search view as :class:`partsel.jobs.find.Search` arguments."""
    kw: dict[str, Any] = {"kind": (q.get("kind") or "capacitor").strip().lower()}
    for key, unit in _QUANTITIES.items():
        if q.get(key):
            kw[key] = units.parse_quantity(q[key], unit, what="--" + key.replace("_", "-"))
    if q.get("band"):
        kw["band"] = units.parse_band(q["band"])
    if q.get("case"):
        kw["cases"] = tuple(c.strip() for c in q["case"].split(",") if c.strip())
    if q.get("limit"):
        kw["limit"] = int(q["limit"]) if q["limit"].isdigit() else units.parse_quantity(
            q["limit"], "")
    return kw


def make_app(store_path: str | None) -> Starlette:
    """The application over the store at ``store_path`` (opened read-only once)."""
    from partsel.jobs import find as find_job
    from partsel.jobs.default_store import open_store

    store = open_store(store_path, write=False)

    async def api_search(request: Request) -> JSONResponse:
        try:
            search = find_job.Search(**search_kwargs(dict(request.query_params)))
            search.validate()
            result = find_job.find(store, search)
        except PartselError as exc:
            return JSONResponse({"error": str(exc)}, status_code=400)
        rows = [{k: _clean(v) for k, v in find_row(r).items()} for r in result.rows]
        return JSONResponse(rows)

    async def server_error(request: Request, exc: Exception) -> PlainTextResponse:
        return PlainTextResponse("internal error: the request could not be answered",
                                 status_code=500)

    web = Starlette(routes=[Route("/api/search", api_search, methods=["GET"])],
                    exception_handlers={500: server_error})
    web.state.store = store
    return web
