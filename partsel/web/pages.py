"""The HTML views, rendered on the server; the query is in the URL, so every view can be
bookmarked. Figures come from the same answers as the JSON routes (:class:`web.app.Answers`);
this module only presents them."""

from __future__ import annotations

import json
from html import escape
from typing import Any
from urllib.parse import quote, urlencode

import numpy as np

from partsel.errors import PartselError
from partsel.render import Col, cell
from partsel.units import format_quantity
from partsel.web import plots
from partsel.web.forms import BadInput

# plotly's options: no logo, no link or button to a web service
CONFIG = ("{displaylogo:false,responsive:true,showLink:false,showSendToCloud:false,"
          "showEditInChartStudio:false}")
PLOTTED = 8          # curves drawn on a search or substitutes view
PER_DECADE = 60

STYLE = """
body{font-family:system-ui,sans-serif;margin:0;color:#222}
nav{background:#234;padding:.5em 1em}nav a{color:#fff;margin-right:1.2em;text-decoration:none}
main{padding:1em}table{border-collapse:collapse;margin:.5em 0;font-size:.9em}
th,td{border:1px solid #ccc;padding:.2em .5em;text-align:left}th{background:#eee}
form.query{display:flex;flex-wrap:wrap;gap:.4em 1em;margin-bottom:1em}
form.query label{display:flex;flex-direction:column;font-size:.85em}
.error{color:#b00;font-size:.85em}.fail{color:#b00}.pass{color:#070}.warn{color:#a60}
.notes{font-size:.85em;color:#555}.plot{width:100%;max-width:1000px}
input.count{width:5em}
"""


def layout(title: str, body: str) -> str:
    nav = "".join(f'<a href="{h}">{t}</a>' for h, t in (
        ("/", "partsel"), ("/search", "search"), ("/substitutes", "substitutes"),
        ("/inductor", "inductor check"), ("/bank", "bank")))
    return (f"<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{escape(title)} - partsel</title>"
            f"<script src=\"/static/plotly.min.js\"></script><style>{STYLE}</style></head>"
            f"<body><nav>{nav}</nav><main><h1>{escape(title)}</h1>{body}</main>"
            f"<script src=\"/static/page.js\"></script></body></html>")


def field(name: str, label: str, q: dict[str, str], err: BadInput | None,
          placeholder: str = "", kind: str = "text", options: tuple[str, ...] = ()) -> str:
    value = q.get(name, "")
    msg = escape(err.message) if err is not None and err.field == name else ""
    if kind == "select":
        opts = "".join(f'<option{" selected" if o == value else ""}>{escape(o)}</option>'
                       for o in options)
        box = f'<select name="{name}">{opts}</select>'
    elif kind == "checkbox":
        box = (f'<input type="checkbox" name="{name}" value="1"'
               f'{" checked" if value else ""}>')
    else:
        box = (f'<input name="{name}" value="{escape(value)}" '
               f'placeholder="{escape(placeholder)}">')
    return (f'<label>{escape(label)} {box}<span class="error" data-field="{name}">{msg}</span>'
            "</label>")


def form(action: str, fields: list[str], err: BadInput | None, fid: str = "query") -> str:
    general = ""
    if err is not None and not any(f'data-field="{err.field}">' in f for f in fields):
        general = f'<p class="error" data-field="">{escape(err.message)}</p>'
    return (f'<form class="query" id="{fid}" action="{action}" method="get">{"".join(fields)}'
            f'<button type="submit">go</button></form>{general}')


def table(rows: list[dict[str, Any]], cols: list[Col], link: Any = None,
          tid: str = "results") -> str:
    head = "".join(f"<th>{escape(c.header)}</th>" for c in cols)
    body = []
    for r in rows:
        tds = []
        for c in cols:
            text = escape(cell(r.get(c.key), c))
            if c.key == "part_number" and link is not None:
                text = f'<a href="{escape(link(r))}">{text}</a>'
            cls = f' class="{r[c.key]}"' if c.key in ("verdict", "passed") else ""
            tds.append(f"<td{cls}>{text}</td>")
        body.append(f"<tr>{''.join(tds)}</tr>")
    return f'<table id="{tid}"><thead><tr>{head}</tr></thead><tbody>{"".join(body)}</tbody></table>'


def plot(div: str, fig: dict[str, Any]) -> str:
    data = json.dumps(fig, allow_nan=False).replace("</", "<\\/")
    return (f'<div id="{div}" class="plot"></div><script>(function(){{var f={data};'
            f'Plotly.newPlot("{div}",f.data,f.layout,{CONFIG});'
            "})();</script>")


def notes(lines: list[str]) -> str:
    return "".join(f'<p class="notes">{escape(n)}</p>' for n in lines if n)


def part_link(r: dict[str, Any]) -> str:
    q = f"?{urlencode({'maker': r['maker']})}" if r.get("maker") else ""
    return f"/part/{quote(str(r['part_number']), safe='')}{q}"


def _q(request: Any) -> dict[str, str]:
    return {k: v for k, v in request.query_params.items()}


# ---- views -----------------------------------------------------------------------------------

def index(answers: Any, request: Any) -> str:
    body = ("<p>Choose capacitors and inductors by their impedance across frequency. The store "
            "is opened read-only; every view's query is in its URL.</p>"
            + _search_form({"kind": "capacitor", "below": "0.5ohm", "band": "1MHz..30MHz"}, None)
            + "<ul><li><a href=\"/substitutes\">substitutes for a part</a></li>"
              "<li><a href=\"/inductor\">check inductors against a frequency and a current</a>"
              "</li><li><a href=\"/bank\">a decoupling bank against a target</a></li></ul>")
    return layout("Local page", body)


def _search_form(q: dict[str, str], err: BadInput | None) -> str:
    fields = [field("kind", "kind", q, err, kind="select", options=("capacitor", "inductor")),
              field("below", "|Z| below", q, err, "0.5ohm"),
              field("above", "|Z| above", q, err, ""),
              field("band", "band", q, err, "1MHz..30MHz"),
              field("value", "value", q, err, "1uF..10uF"),
              field("case", "case", q, err, "0402,0603"),
              field("dielectric", "dielectric", q, err, "X7R"),
              field("technology", "technology", q, err, "mlcc"),
              field("min_voltage", "rated at least", q, err, "6.3V"),
              field("bias", "DC bias", q, err, "3.3V"),
              field("mount_l", "mounting L", q, err, "0.5nH"),
              field("inductive_to", "inductive to", q, err, "100MHz"),
              field("current", "current", q, err, "1A"),
              field("ripple_current", "ripple (p-p)", q, err, "0.3A"),
              field("min_q", "min Q", q, err, "30@10MHz"),
              field("maker", "maker", q, err),
              field("model", "model", q, err, kind="select",
                    options=("best", "catalog", "vendor", "measured")),
              field("limit", "rows", q, err, "20"),
              field("in_stock", "in stock", q, err, kind="checkbox"),
              field("include_obsolete", "obsolete too", q, err, kind="checkbox"),
              field("corners", "judge at the worst corner", q, err, kind="checkbox"),
              field("temp", "temperature", q, err, "-40C..85C"),
              field("age", "life", q, err, "10y")]
    return form("/search", fields, err)


def search(answers: Any, request: Any) -> str:
    from partsel.cli.cmd_find import corner_columns, table_columns
    from partsel.jobs.show import curves

    q = _q(request)
    asked = any(q.get(k) for k in ("below", "above", "band", "inductive_to", "value"))
    if not asked:
        return layout("Search", _search_form(q or {"kind": "capacitor"}, None))
    try:
        s, result, _rows = answers.search(q)
    except BadInput as exc:
        return layout("Search", _search_form(q, exc))
    cols = table_columns(s)
    if s.corners:
        cols = corner_columns(s, cols)
    body = [_search_form(q, None),
            f'<p id="summary">{result.matches} of {result.considered} {s.kind}s pass; '
            f"showing {len(result.rows)}, {escape(result.order)}.</p>",
            table(result.rows, cols, part_link)]
    top = result.rows[:PLOTTED]
    if top:
        try:
            band = plots.widened(s.band) if s.band else None
            cv = curves(answers.store, [r["part_number"] for r in top], band, PER_DECADE,
                        bias=s.bias, mount_l=s.mount_l, model=s.model)
            limit = s.below if s.below is not None else s.above
            body.append(plot("zplot", plots.z_figure(cv.f, cv.labels, cv.z, limit=limit,
                                                     band=s.band)))
        except PartselError as exc:
            body.append(notes([f"no plot: {exc}"]))
    body.append(notes(["Model: " + "; ".join(result.effects), *result.notes]))
    return layout("Search", "".join(body))


_PART_FIELDS = [("maker", None), ("kind", None), ("technology", None), ("case", None),
                ("dielectric", None), ("mounting", None), ("tolerance", "%"),
                ("rated_voltage", "V"), ("temp_min", "degC"), ("temp_max", "degC"),
                ("height", "m"), ("isat", "A"), ("isat_drop", "%"), ("irms", "A"),
                ("safety_class", None), ("aec_q200_grade", None), ("lifecycle", None),
                ("price", ""), ("stock", ""), ("bias_curve", None), ("source_file", None)]
_MODEL_UNITS = {"esr": "ohm", "esl": "H", "tan_delta": "", "dcr": "ohm", "srf": "Hz",
                "rp": "ohm"}


def part(answers: Any, request: Any) -> str:
    from partsel.jobs.show import curves

    pn = request.path_params["pn"]
    q = _q(request)
    lookup = [field("maker", "maker", q, None),
              field("model", "model", q, None, kind="select",
                    options=("best", "catalog", "vendor", "measured"))]
    try:
        rep, _ = answers.part(pn, q)
    except BadInput as exc:
        box = field("part", "part number", {"part": pn}, exc)
        return layout(f"Part {pn}", f'<form class="query" id="query" '
                      f'onsubmit="location.href=\'/part/\'+encodeURIComponent(this.part.value);'
                      f'return false">{box}<button>go</button></form>')
    p = rep.part
    vunit = "F" if p["kind"] == "capacitor" else "H"
    cat = [{"key": k, "value": cell(p.get(k), Col(k, k, u))} for k, u in _PART_FIELDS
           if p.get(k) not in (None, "")]
    cat += [{"key": k, "value": f"{v} (extra column)"} for k, v in (p.get("extra") or {}).items()]
    model = [{"key": k, "value": cell(v, Col(k, k, vunit if k == "value" else _MODEL_UNITS[k])),
              "source": src or ""} for k, (v, src) in rep.model.items()]
    body = [form(f"/part/{quote(pn, safe='')}", lookup, None),
            f"<p>{escape(p['part_number'])} ({escape(p['maker'])}, {escape(p['kind'])})</p>",
            "<h2>Catalog</h2>", table(cat, [Col("key", "field"), Col("value", "value")],
                                      tid="catalog"),
            "<h2>Model</h2>", table(model, [Col("key", "parameter"), Col("value", "value"),
                                            Col("source", "source")], tid="model"),
            f"<p>Figures from: {escape(rep.used['label'])} ({escape(rep.used['origin'])})</p>",
            table(rep.points, [Col("f_hz", "f", "Hz"), Col("z_ohm", "|Z|", "ohm"),
                               Col("phase_deg", "phase", ""), Col("esr_ohm", "Re Z", "ohm"),
                               Col("q", "Q", "")], tid="points")]
    try:
        cv = curves(answers.store, [p["part_number"]], None, PER_DECADE, maker=p["maker"],
                    model=q.get("model") or "best")
        labels, z, dash = [f"{p['part_number']} ({rep.used['label']})"], cv.z, [False]
        if rep.sweeps:   # the measured sweep beside the model (or the model beside it)
            other = "catalog" if rep.used["source"] == "measured" else "measured"
            m = curves(answers.store, [p["part_number"]], (cv.f[0], cv.f[-1]), PER_DECADE,
                       maker=p["maker"], model=other)
            word = "catalog model" if other == "catalog" else "measured"
            labels, z, dash = labels + [f"{p['part_number']} ({word})"], \
                np.vstack([z, m.z]), [False, True]
        body += [plot("zplot", plots.z_figure(cv.f, labels, z, dash=dash)),
                 plot("phaseplot", plots.phase_figure(cv.f, labels, z)),
                 plot("esrplot", plots.esr_figure(cv.f, labels, z))]
    except PartselError as exc:
        body.append(notes([f"no plot: {exc}"]))
    body.append(notes(rep.cautions))
    body.append(f'<p><a href="/substitutes?{urlencode({"part": p["part_number"]})}">'
                "substitutes for this part</a></p>")
    return layout(f"Part {p['part_number']}", "".join(body))


def _subs_form(q: dict[str, str], err: BadInput | None) -> str:
    return form("/substitutes", [
        field("part", "part number", q, err), field("maker", "maker", q, err),
        field("band", "band", q, err, "default from the SRF"),
        field("within", "|Z| within", q, err, "6dB"),
        field("esr_window", "ESR window", q, err, "0.5..2"),
        field("bias", "DC bias", q, err, "3.3V"),
        field("working_voltage", "working voltage", q, err, "3.3V"),
        field("value_within", "value within", q, err, "10%"),
        field("case", "cases", q, err, "0402,0603"),
        field("srf_above", "SRF above", q, err),
        field("limit", "rows", q, err, "10"),
        field("explain", "near misses", q, err, kind="checkbox"),
        field("corners", "judge at the worst corner", q, err, kind="checkbox"),
        field("temp", "temperature", q, err, "-40C..85C"),
        field("age", "life", q, err, "10y")], err)


_SUB_COLS = [Col("rank", "#"), Col("part_number", "part"), Col("maker", "maker"),
             Col("case", "case"), Col("technology", "tech."), Col("distance_db", "dist. dB", ""),
             Col("max_diff_db", "max dB", ""), Col("price", "price", ""),
             Col("stock", "stock", ""), Col("passes", "rules (pass / fail)")]


def _rule_cells(c: Any, i: int) -> dict[str, Any]:
    text = "; ".join(f"{'pass' if r.passed else 'FAIL'} {r.rule}: {r.detail}" for r in c.rules)
    return {**c.part, "rank": i, "distance_db": c.distance_db, "max_diff_db": c.max_diff_db,
            **(c.corner or {}), "passes": text}


def substitutes(answers: Any, request: Any) -> str:
    from partsel.jobs.show import curves

    q = _q(request)
    if not q.get("part"):
        return layout("Substitutes", _subs_form(q, None))
    try:
        res, _ = answers.substitutes(q)
    except BadInput as exc:
        return layout("Substitutes", _subs_form(q, exc))
    o = res.original
    body = [_subs_form(q, None),
            f'<p id="original">Original: <a href="{escape(part_link(o))}">'
            f"{escape(o['part_number'])}</a> ({escape(o['maker'])}); band "
            f"{escape(format_quantity(res.band[0], 'Hz'))}.."
            f"{escape(format_quantity(res.band[1], 'Hz'))}"
            f"; {res.passing} pass all {len(res.rules)} rules ({res.fit} form and fit)</p>"]
    cols = _SUB_COLS
    if res.original_corner is not None:
        from partsel.cli.cmd_alternates import CORNER_COLS, original_corner_line
        body.append(f'<p id="corner">{escape(original_corner_line(res, o["kind"]))}</p>')
        cols = [*_SUB_COLS[:-1], *CORNER_COLS[o["kind"]], _SUB_COLS[-1]]
    body.append(table([_rule_cells(c, i) for i, c in enumerate(res.candidates, 1)], cols,
                      part_link))
    if res.near_misses:
        body += ["<h2>Near misses (one rule failed)</h2>",
                 table([_rule_cells(c, i) for i, c in enumerate(res.near_misses, 1)],
                       cols, part_link, tid="misses")]
    top = [o] + [c.part for c in res.candidates[:PLOTTED]]
    try:
        cv = curves(answers.store, [r["part_number"] for r in top], res.band, PER_DECADE,
                    bias=res.bias, model=q.get("model") or "best")
        labels = [f"{cv.labels[0]} (original)", *cv.labels[1:]]
        body.append(plot("zplot", plots.z_figure(cv.f, labels, cv.z,
                                                 dash=[False] + [True] * (len(top) - 1))))
    except PartselError as exc:
        body.append(notes([f"no plot: {exc}"]))
    body.append(notes(["Rules: " + ", ".join(res.rules), *(["skipped: " + "; ".join(res.skipped)]
                                                           if res.skipped else []),
                       "Model: " + "; ".join(res.effects), *res.notes, *res.cautions]))
    return layout("Substitutes", "".join(body))


def _ind_form(q: dict[str, str], err: BadInput | None) -> str:
    return form("/inductor", [
        field("parts", "part numbers", q, err, "PART1,PART2"),
        field("inductive_to", "inductive to", q, err, "100MHz"),
        field("current", "DC current", q, err, "1.2A"),
        field("ripple_current", "ripple (p-p)", q, err, "0.3A"),
        field("min_q", "min Q", q, err, "30@10MHz"),
        field("model", "model", q, err, kind="select",
              options=("best", "catalog", "vendor", "measured")),
        field("corners", "judge at the worst corner", q, err, kind="checkbox"),
        field("temp", "temperature", q, err, "-40C..85C"),
        field("yield", "yield: builds", q, err, "10000"),
        field("seed", "seed", q, err, "0"),
        field("distribution", "distribution", q, err, kind="select",
              options=("normal", "uniform"))], err)


def inductor(answers: Any, request: Any) -> str:
    from partsel.cli.cmd_inductive import COLS, CURRENT_COLS, corner_columns
    from partsel.engine.pdn import log_grid

    q = _q(request)
    if not q.get("parts"):
        return layout("Inductor check", _ind_form(q, None))
    try:
        res, _ = answers.inductor(q)
    except BadInput as exc:
        return layout("Inductor check", _ind_form(q, exc))
    spec = res.spec
    cols = COLS[:-1] + (CURRENT_COLS if spec.current is not None else []) + COLS[-1:]
    builds = any("yield_text" in r for r in res.rows)
    if any("corner_zero_phase_hz" in r for r in res.rows):
        cols = corner_columns(spec, cols)
    if builds:
        cols.insert(-1, Col("yield_share", "yield", "%"))
    body = [_ind_form(q, None), table(res.rows, cols, part_link),
            "<h2>Reasons and inductive range</h2><ul>"]
    for r in res.rows:
        zp = r.get("zero_phase_hz")
        rng = f"inductive from DC to {format_quantity(zp, 'Hz')}" if zp and np.isfinite(zp) \
            else "inductive at every frequency the model covers"
        body.append(f'<li><b>{escape(r["part_number"])}</b>: <span class="{r["verdict"]}">'
                    f'{r["verdict"]}</span>; {escape(rng)}<ul>'
                    + "".join(f"<li>{escape(x)}</li>" for x in r["reasons"])
                    + (f"<li>yield: {escape(r['yield_text'])}</li>" if builds else "")
                    + "</ul></li>")
    body.append("</ul>")
    f = log_grid(spec.target / 100.0, spec.target * 100.0, PER_DECADE)
    z = res.models.impedance(f)
    fig = plots.z_figure(f, [r["part_number"] for r in res.rows], z)
    fig["layout"]["shapes"] = [{"type": "line", "x0": spec.target, "x1": spec.target,
                                "yref": "paper", "y0": 0, "y1": 1,
                                "line": {"dash": "dash", "color": "black"}}]
    body.append(plot("zplot", fig))
    body.append(notes(["Model: " + "; ".join(res.effects), *res.notes]))
    return layout("Inductor check", "".join(body))


def bank_lines_of(q: Any) -> list[dict[str, Any]]:
    """Bank lines from the URL: repeated ``line=PART:COUNT[:MAKER]``."""
    out = []
    for text in q.getlist("line"):
        pn, _, rest = text.partition(":")
        cnt, _, maker = rest.partition(":")
        out.append({"part_number": pn.strip(), "count": cnt.strip() or "1",
                    "maker": maker.strip() or None})
    return out


def bank_plot(res: Any) -> dict[str, Any]:
    """The bank's figure: each line (its copies in parallel), the total and the target."""
    from partsel.engine.pdn import log_grid

    lo, hi = res.rail.band
    f = log_grid(lo, hi, PER_DECADE)
    cv = res.curves(f)
    fig = plots.z_figure(f, [lab for lab, _ in cv], np.array([z for _, z in cv]),
                         limit=res.rail.target, band=res.rail.band, limit_name="target",
                         dash=[lab != "total" for lab, _ in cv])
    from partsel.cli.cmd_decouple import LINE_COLS

    return {"figure": fig, "summary": bank_summary(res),
            "table": table(res.lines, LINE_COLS, part_link, tid="bank-table")}


def bank_summary(res: Any) -> str:
    verdict = "target met" if res.met else "TARGET NOT MET"
    out = (f"worst |Z| {format_quantity(res.max_z, 'ohm', 4)} at "
           f"{format_quantity(res.f_max_z, 'Hz', 4)} against the target "
           f"{format_quantity(res.rail.target, 'ohm', 4)}: {verdict}; {res.parts} parts on "
           f"{len(res.lines)} lines")
    if res.corners is not None or res.builds is not None:
        from partsel.jobs.decouple.spread import corner_text, yield_text
        if res.corners is not None:     # the first line of each, as the command prints it
            out += ". " + corner_text(res.corners)[0]
        if res.builds is not None:
            out += " " + yield_text(res.builds)[0]
    return out


def bank(answers: Any, request: Any) -> str:
    q = _q(request)
    lines = bank_lines_of(request.query_params)
    err: BadInput | None = None
    res = None
    if lines:
        try:
            res, _ = answers.bank({**q, "lines": lines})
        except BadInput as exc:
            err = exc
    fields = [field("rail", "rail", q, err, "1.0V"), field("target", "target", q, err, "3mohm"),
              field("ripple", "or ripple", q, err, "3%"), field("step", "with step", q, err,
                                                                 "10A"),
              field("band", "band", q, err, "10kHz..100MHz"),
              field("mount_l", "mounting L", q, err, "0402=0.4nH"),
              field("margin", "margin", q, err, "10%"),
              field("model", "model", q, err, kind="select",
                    options=("best", "catalog", "vendor", "measured")),
              field("corners", "judge at the worst corner", q, err, kind="checkbox"),
              field("temp", "temperature", q, err, "-40C..85C"),
              field("age", "life", q, err, "10y"),
              field("yield", "yield: builds", q, err, "10000"),
              field("seed", "seed", q, err, "0"),
              field("distribution", "distribution", q, err, "normal")]
    rows = []
    for i, ln in enumerate(lines or [{"part_number": "", "count": "1", "maker": None}]):
        msg = escape(err.message) if err is not None and err.field and \
            err.field.startswith(f"lines.{i}") else ""
        rows.append(
            f'<tr class="line"><td><input class="pn" value="{escape(ln["part_number"])}">'
            f'</td><td><input class="count" type="number" min="1" step="1" '
            f'value="{escape(str(ln["count"]))}"></td><td><input class="maker" '
            f'value="{escape(ln["maker"] or "")}"></td><td><button type="button" '
            f'class="remove">remove</button></td><td class="error line-error">{msg}</td></tr>')
    general = ""
    if err is not None and (err.field in (None, "lines", "part")):
        general = escape(err.message)
    body = [f'<form class="query" id="bank-form" onsubmit="return false">{"".join(fields)}'
            "</form>",
            '<table id="bank-lines"><thead><tr><th>part number</th><th>count</th><th>maker</th>'
            f'<th></th><th></th></tr></thead><tbody>{"".join(rows)}</tbody></table>',
            '<p><button type="button" id="add-line">add line</button> '
            '<button type="button" id="recompute">recompute</button> '
            '<a id="download-bank" download="bank.csv" href="#">bank file</a> '
            '<a id="download-json" download="bank.json" href="#">JSON</a></p>',
            f'<p class="error" id="bank-error" data-field="">{general}</p>',
            f'<p id="bank-total">{escape(bank_summary(res)) if res is not None else ""}</p>']
    if res is not None:
        shown = bank_plot(res)
        body += [plot("zplot", shown["figure"]), f'<div id="bank-table-box">{shown["table"]}</div>']
        body.append(f'<script>window.BANK_RESULT={_script_json(res.to_dict())};</script>')
    else:
        body.append('<div id="zplot" class="plot"></div><div id="bank-table-box"></div>')
    return layout("Bank", "".join(body))


def _script_json(payload: Any) -> str:
    from partsel.render import to_json
    return to_json(payload).replace("</", "<\\/")
