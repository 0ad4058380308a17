"""Charts across the versions of an engine: the consistency rate with its interval band, and the gender gap.

PNG through matplotlib's Agg backend (no display needed); HTML is one self-contained page that embeds the same
PNG as base64 beside a table of the plotted numbers.
"""

from __future__ import annotations

import base64
import html
import io
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace.history.compare import DEFAULT_SAMPLES, DEFAULT_SEED, gap_counts
from gendertrace.history.stats import GapEstimate, Interval, bootstrap_rate, gap_bootstrap, wilson_interval
from gendertrace.history.store import HistoryError, HistoryStore


@dataclass(frozen=True)
class VersionPoint:
    engine: str
    version: str
    recorded_at: str
    documents: int
    consistent: int
    checked: int
    wilson: Interval | None
    bootstrap: Interval | None
    gap: GapEstimate | None

    @property
    def rate(self) -> float | None:
        return self.consistent / self.checked if self.checked else None


def version_points(store: HistoryStore, engines: Sequence[str] | None = None, samples: int = DEFAULT_SAMPLES,
                   seed: int | None = DEFAULT_SEED) -> list[VersionPoint]:
    """One point per recorded run of the engines (all engines when none are named), oldest first."""
    runs = store.runs()
    if engines:
        known = {r.engine for r in runs}
        missing = [e for e in engines if e not in known]
        if missing:
            raise HistoryError(f"no runs of engine(s) {', '.join(missing)} in {store.display_url} "
                               f"(engines: {', '.join(sorted(known)) or 'none'})")
        runs = [r for r in runs if r.engine in engines]
    if not runs:
        raise HistoryError(f"no runs recorded in {store.display_url}")
    points = []
    for info in runs:
        _, run = store.load(info.engine, info.version)
        cons = [d.consistent for d in run.documents]
        chk = [d.checked for d in run.documents]
        boot = bootstrap_rate(cons, chk, samples, seed)
        gap = None
        if info.has_entities:
            gap = gap_bootstrap(gap_counts(run, [d.doc_id for d in run.documents]), samples, seed)
        points.append(VersionPoint(info.engine, info.version, info.recorded_at, len(run.documents), sum(cons),
                                   sum(chk), wilson_interval(sum(cons), sum(chk)), boot.interval, gap))
    return points


def render_png(points: Sequence[VersionPoint], title: str = "", columns: int = 5) -> bytes:
    """One panel pair per engine (rate with its band above, gap below), at most COLUMNS engines a row."""
    import math

    import matplotlib
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    engines = list(dict.fromkeys(p.engine for p in points))
    cols = min(columns, len(engines))
    rows = math.ceil(len(engines) / cols)
    fig = Figure(figsize=(max(6.0, 2.9 * cols), 5.2 * rows), dpi=110)
    FigureCanvasAgg(fig)  # the Agg canvas, without switching the backend of a caller's pyplot
    grid = fig.add_gridspec(2 * rows, cols, height_ratios=[3, 2] * rows)
    colour = matplotlib.colormaps["tab10"](0)
    for k, engine in enumerate(engines):
        r, c = divmod(k, cols)
        top = fig.add_subplot(grid[2 * r, c])
        bottom = fig.add_subplot(grid[2 * r + 1, c], sharex=top)
        pts = [p for p in points if p.engine == engine]
        xs = list(range(len(pts)))
        rated = [(x, p) for x, p in zip(xs, pts, strict=True) if p.rate is not None]
        if rated:
            top.plot([x for x, _ in rated], [p.rate for _, p in rated], marker="o", color=colour)
        banded = [(x, p.bootstrap) for x, p in rated if p.bootstrap is not None]
        if banded:
            top.fill_between([x for x, _ in banded], [b.low for _, b in banded], [b.high for _, b in banded],
                             color=colour, alpha=0.18, linewidth=0, label="95% bootstrap (documents)")
        walled = [(x, p) for x, p in rated if p.wilson is not None]
        if walled:
            top.errorbar([x for x, _ in walled], [p.rate for _, p in walled],
                         yerr=[[p.rate - p.wilson.low for _, p in walled],
                               [p.wilson.high - p.rate for _, p in walled]],
                         fmt="none", ecolor="black", elinewidth=0.8, capsize=3, label="95% Wilson")
        top.set_ylim(0, 1.02)
        top.set_title(engine, fontsize=10)
        top.grid(True, alpha=0.3)
        top.tick_params(labelbottom=False)
        gaps = [(x, p.gap) for x, p in zip(xs, pts, strict=True)
                if p.gap is not None and p.gap.gap is not None]
        if gaps:
            ys = [g.gap for _, g in gaps]
            lo = [g.gap - g.interval.low if g.interval else 0.0 for _, g in gaps]
            hi = [g.interval.high - g.gap if g.interval else 0.0 for _, g in gaps]
            bottom.errorbar([x for x, _ in gaps], ys, yerr=[lo, hi], marker="s", color="tab:purple",
                            capsize=3)
        bottom.axhline(0.0, color="grey", linewidth=0.8)
        bottom.set_ylim(-1.05, 1.05)
        bottom.grid(True, alpha=0.3)
        bottom.set_xticks(xs)
        bottom.set_xticklabels([p.version for p in pts])
        bottom.set_xlim(-0.5, len(pts) - 0.5)
        if c == 0:
            top.set_ylabel("consistency rate")
            bottom.set_ylabel("gap: fem - masc")
        if k == 0:
            top.legend(fontsize=7, loc="lower right")
    fig.suptitle(title or "Consistency rate by engine version, and the feminine minus masculine gap",
                 fontsize=11)
    fig.supxlabel("engine version (in order of recording); gap bars: 95% bootstrap over documents",
                  fontsize=9)
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    return buf.getvalue()


def _cell(x: float | None, signed: bool = False) -> str:
    if x is None:
        return "n/a"
    return f"{x:+.3f}" if signed else f"{x:.3f}"


def render_html(points: Sequence[VersionPoint], png: bytes, title: str = "") -> str:
    rows = []
    for p in points:
        g = p.gap
        rows.append(
            "<tr>" + "".join(f"<td>{html.escape(str(v))}</td>" for v in (
                p.engine, p.version, p.recorded_at[:19], p.documents, f"{p.consistent}/{p.checked}",
                _cell(p.rate),
                p.wilson.fmt() if p.wilson else "n/a", p.bootstrap.fmt() if p.bootstrap else "n/a",
                _cell(g.fem_rate) if g else "n/a", _cell(g.masc_rate) if g else "n/a",
                _cell(g.gap, True) if g else "n/a", g.interval.fmt(3, True) if g and g.interval else "n/a",
            )) + "</tr>")
    head = ("engine", "version", "recorded (UTC)", "documents", "consistent/checked", "rate", "95% Wilson",
            "95% bootstrap", "feminine", "masculine", "gap", "gap 95% bootstrap")
    title = html.escape(title or "gendertrace: consistency across engine versions")
    data = base64.b64encode(png).decode("ascii")
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>{title}</title>
<style>
body {{ font-family: sans-serif; margin: 2em; color: #222; }}
table {{ border-collapse: collapse; font-size: 0.9em; }}
th, td {{ border: 1px solid #ccc; padding: 0.3em 0.6em; text-align: right; }}
th {{ background: #f3f3f3; }}
img {{ max-width: 100%; height: auto; }}
td:first-child, td:nth-child(2) {{ text-align: left; }}
</style>
</head>
<body>
<h1>{title}</h1>
<p><img alt="Consistency rate and gender gap by engine version" src="data:image/png;base64,{data}"></p>
<table>
<thead><tr>{"".join(f"<th>{h}</th>" for h in head)}</tr></thead>
<tbody>
{chr(10).join(rows)}
</tbody>
</table>
<p>Rates are consistent over checked gendered target references. The gap compares entities whose source
evidence is feminine with those whose source evidence is masculine. Findings are aids for a human
post-editor, not verdicts.</p>
</body>
</html>
"""


def write_chart(store: HistoryStore, out: str | Path, engines: Sequence[str] | None = None,
                samples: int = DEFAULT_SAMPLES, seed: int | None = DEFAULT_SEED, title: str = "") -> Path:
    """Write the chart as OUT (.png or .html, from the extension)."""
    out = Path(out)
    suffix = out.suffix.lower()
    if suffix not in (".png", ".html", ".htm"):
        raise HistoryError(f"chart file {out} must end in .png or .html")
    points = version_points(store, engines, samples, seed)
    png = render_png(points, title)
    out.parent.mkdir(parents=True, exist_ok=True)
    if suffix == ".png":
        out.write_bytes(png)
    else:
        out.write_text(render_html(points, png, title), encoding="utf-8")
    return out
