"""The starlette application: JSON routes, HTML views, read-only store, plain errors.

JSON routes answer with the keys of the CLI's ``--format json`` (the shapers of
:mod:`partsel.glossary`); a bad input is HTTP 400 ``{"error": <the CLI's Error: message>,
"field": <the query field>}``. Only GET (and POST for the bank) on the routes below; the
store is opened read-only once; no path from a client is ever opened.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from starlette.applications import Starlette
from starlette.requests import Request
from starlette.responses import FileResponse, HTMLResponse, PlainTextResponse, Response
from starlette.routing import Route

from partsel.errors import PartNotFound, PartselError
from partsel.glossary import alternates_json, alternates_row, find_row, inductive_row, show_json
from partsel.render import to_json
from partsel.web import forms
from partsel.web.forms import BadInput

STATIC = Path(__file__).parent / "static"
PLOTLY_JS = "plotly.min.js"
MAX_BODY = 1 << 20   # a bank body larger than this is refused
ARRAYS_KEPT = 4      # candidate column sets kept warm (about 30 MB each at 750,000 parts)


def plotly_path() -> Path:
    """plotly.js as shipped inside the plotly package (package_data/plotly.min.js)."""
    import plotly

    return Path(plotly.__file__).parent / "package_data" / PLOTLY_JS


def json_response(payload: Any, status: int = 200) -> Response:
    return Response(to_json(payload), status_code=status, media_type="application/json")


def bad(exc: BadInput) -> Response:
    return json_response({"error": exc.message, "field": exc.field}, 400)


# ---- the answers, shared by the JSON routes and the views -------------------------------------

class Answers:
    """Each view's job call and its CLI-shaped JSON, over one read-only store."""

    def __init__(self, store: Any) -> None:
        self.store = store

    def search(self, q: dict[str, str]) -> tuple[Any, Any, list[dict[str, Any]]]:
        from partsel.jobs import find as find_job

        search = forms.search_from_query(q)
        with forms.reading(None, forms.FIND_FLAGS, q):
            result = find_job.find(self.store, search)
        return search, result, [find_row(r) for r in result.rows]

    def part(self, pn: str, q: dict[str, str]) -> tuple[Any, dict[str, Any]]:
        from partsel.jobs.show import report

        with forms.reading("part"):
            rep = report(self.store, pn, q.get("maker") or None, model=forms.model_of(q))
        return rep, show_json(rep)

    def substitutes(self, q: dict[str, str]) -> tuple[Any, dict[str, Any]]:
        from partsel.jobs.alternates import alternates

        part, maker, crit = forms.alternates_from_query(q)
        with forms.reading("part", {}, q):
            res = alternates(self.store, part, maker, crit)
        kind = res.original["kind"]
        rows = [alternates_row(i, c, kind) for i, c in enumerate(res.candidates, 1)]
        misses = [alternates_row(i, c, kind) for i, c in enumerate(res.near_misses, 1)]
        return res, alternates_json(res, rows, misses if crit.explain else None)

    def inductor(self, q: dict[str, str]) -> tuple[Any, list[dict[str, Any]]]:
        from partsel.jobs.inductive import check

        parts, spec, (corners, cond, ys) = forms.inductive_from_query(q)
        with forms.reading("parts", forms.INDUCTIVE_FLAGS, q):
            res = check(self.store, parts, spec, q.get("maker") or None,
                        model=forms.model_of(q))
        if corners:
            from partsel.jobs.inductive_corners import apply_corners
            apply_corners(res, cond)
        if ys is not None:
            from partsel.jobs.inductive_corners import apply_yield
            apply_yield(res, cond, ys)
        rows = [inductive_row(r) for r in res.rows]
        if corners or ys is not None:   # as inductive --format json with the worst case
            return res, {"effects": res.effects, "notes": res.notes, "rows": rows}
        return res, rows

    def bank(self, body: dict[str, Any]) -> tuple[Any, dict[str, Any]]:
        from partsel.jobs import decouple as dec

        rail = forms.rail_from(body)
        entries = forms.bank_lines(body.get("lines"))
        for i, e in enumerate(entries):   # point an unknown part at its line
            with forms.reading(f"lines.{i}.part_number"):
                self.store.find_part(e.part_number, e.maker)
        with forms.reading("lines"):
            res = dec.check(self.store, rail, entries, model=forms.model_of(body))
        return res, res.to_dict()



async def read_body(request: Request) -> dict[str, Any]:
    """A bank body: JSON, or a form (the lines as JSON in its ``lines`` field)."""
    raw = await request.body()
    if len(raw) > MAX_BODY:
        raise BadInput("the request is too large: a bank holds at most a few thousand lines",
                       "lines")
    kind = request.headers.get("content-type", "")
    try:
        if kind.startswith("application/x-www-form-urlencoded"):
            from urllib.parse import parse_qsl
            body: Any = dict(parse_qsl(raw.decode("utf-8")))
            body["lines"] = json.loads(body.get("lines") or "[]")
        else:
            body = json.loads(raw.decode("utf-8") or "{}")
    except (UnicodeDecodeError, json.JSONDecodeError):
        raise BadInput("the body is not JSON: send {\"rail\": ..., \"target\": ..., \"band\": "
                       "..., \"lines\": [{\"part_number\": ..., \"count\": ...}]}", None) from None
    if not isinstance(body, dict):
        raise BadInput("the body must be a JSON object with rail, target, band and lines", None)
    return body


def keep_warm(store: Any, size: int = 4096) -> Any:
    """Remember parts looked up by number and the band search's candidate columns: the store
    is open read-only and DuckDB lets no process write the file meanwhile, so what was read
    once stays as it was. (A lookup scans the part numbers: 20-40 ms in 1,000,000 parts, paid
    on every bank edit without this; the candidate columns take 40-150 ms.) Each caller gets
    its own copy."""
    import copy
    from functools import lru_cache

    lookup = lru_cache(maxsize=size)(store.find_part)

    def find_part(part_number: str, maker: str | None = None) -> dict[str, Any]:
        return copy.deepcopy(lookup(part_number, maker))

    store.find_part = find_part
    # the band search's candidate columns: the same filters (whatever the band, limit or
    # bias) read the same arrays; a few kept, each caller gets copies
    kept: dict[str, dict[str, Any]] = {}
    read = store.arrays

    def arrays(sql: str, params: Any = ()) -> dict[str, Any]:
        key = json.dumps([sql, list(params)], default=str)
        if key not in kept:
            if len(kept) >= ARRAYS_KEPT:
                kept.pop(next(iter(kept)))
            kept[key] = read(sql, params)
        return {k: v.copy() for k, v in kept[key].items()}

    store.arrays = arrays
    # rows by id (the rows a search shows)
    rows: dict[int, dict[str, Any]] = {}
    by_id = store.parts_by_id

    def parts_by_id(ids: Any) -> list[dict[str, Any]]:
        ids = [int(i) for i in ids]
        missing = [i for i in ids if i not in rows]
        if missing:
            if len(rows) > size * 4:
                rows.clear()
            rows.update((int(r["id"]), r) for r in by_id(missing))
        return [copy.deepcopy(rows[i]) for i in ids if i in rows]

    store.parts_by_id = parts_by_id
    return store


def make_app(store_path: str | None) -> Starlette:
    """The application over the store at ``store_path`` (opened read-only once)."""
    from partsel.jobs.default_store import open_store
    from partsel.web import pages

    store = keep_warm(open_store(store_path, write=False))
    answers = Answers(store)

    async def api_search(request: Request) -> Response:
        try:
            return json_response(answers.search(dict(request.query_params))[2])
        except BadInput as exc:
            return bad(exc)

    async def api_part(request: Request) -> Response:
        try:
            return json_response(answers.part(request.path_params["pn"],
                                              dict(request.query_params))[1])
        except BadInput as exc:
            return bad(exc)

    async def api_substitutes(request: Request) -> Response:
        try:
            return json_response(answers.substitutes(dict(request.query_params))[1])
        except BadInput as exc:
            return bad(exc)

    async def api_inductor(request: Request) -> Response:
        try:
            return json_response(answers.inductor(dict(request.query_params))[1])
        except BadInput as exc:
            return bad(exc)

    async def api_bank(request: Request) -> Response:
        try:
            return json_response(answers.bank(await read_body(request))[1])
        except BadInput as exc:
            return bad(exc)

    async def api_bank_plot(request: Request) -> Response:
        try:
            body = await read_body(request)
            res, payload = answers.bank(body)
        except BadInput as exc:
            return bad(exc)
        return json_response({"result": payload, **pages.bank_plot(res)})

    async def static_plotly(request: Request) -> Response:
        return FileResponse(plotly_path(), media_type="text/javascript")

    async def static_page(request: Request) -> Response:
        return FileResponse(STATIC / "page.js", media_type="text/javascript")

    def view(render: Any) -> Any:
        async def handler(request: Request) -> Response:
            return HTMLResponse(render(answers, request))
        return handler

    async def server_error(request: Request, exc: Exception) -> PlainTextResponse:
        return PlainTextResponse("internal error: the request could not be answered",
                                 status_code=500)

    routes = [
        Route("/api/search", api_search, methods=["GET"]),
        Route("/api/part/{pn:path}", api_part, methods=["GET"]),
        Route("/api/substitutes", api_substitutes, methods=["GET"]),
        Route("/api/inductor", api_inductor, methods=["GET"]),
        Route("/api/bank", api_bank, methods=["POST"]),
        Route("/api/bank/plot", api_bank_plot, methods=["POST"]),
        Route("/static/plotly.min.js", static_plotly, methods=["GET"]),
        Route("/static/page.js", static_page, methods=["GET"]),
        Route("/", view(pages.index), methods=["GET"]),
        Route("/search", view(pages.search), methods=["GET"]),
        Route("/part/{pn:path}", view(pages.part), methods=["GET"]),
        Route("/substitutes", view(pages.substitutes), methods=["GET"]),
        Route("/inductor", view(pages.inductor), methods=["GET"]),
        Route("/bank", view(pages.bank), methods=["GET"]),
    ]
    web = Starlette(routes=routes, exception_handlers={500: server_error})
    web.state.store = store
    return web


__all__ = ["Answers", "PartNotFound", "PartselError", "make_app", "plotly_path"]
