"""Time and size of a self-contained HTML snapshot of a moderate layout. Prints figures.

Run: python tests/benchmarks/bench_offline.py
"""

from __future__ import annotations

import tempfile
import time
from io import StringIO
from pathlib import Path

import holoviews as hv
import numpy as np
import pandas as pd
import panel as pn
from bokeh.resources import INLINE

from orbitdeck.dashboard.offline import save_offline

hv.extension("bokeh")


def moderate_layout(points: int = 2000, rows: int = 60) -> pn.Column:
    """Four hover-enabled plots in tabs, an HTML note and a table."""
    rng = np.random.default_rng(7)
    x = np.linspace(0.0, 50.0, points)
    plots = [
        hv.Curve((x, np.sin(x)), "t", "a").opts(tools=["hover"], width=500, height=300),
        hv.Scatter((rng.normal(size=points), rng.normal(size=points)), "u", "v").opts(
            tools=["hover"], width=500, height=300),
        hv.Curve((x, np.cos(x) * np.exp(-x / 30)), "t", "b").opts(tools=["hover"]),
        hv.Scatter((x, x ** 0.5), "t", "c").opts(tools=["hover"]),
    ]
    tabs = pn.Tabs(*[(f"view {i}", pn.pane.HoloViews(p)) for i, p in enumerate(plots)])
    table = pd.DataFrame({"name": [f"row {i}" for i in range(rows)],
                          "value": rng.normal(size=rows)})
    return pn.Column(pn.pane.HTML("<h2>Snapshot</h2><p>model estimates</p>"), tabs,
                     pn.widgets.Tabulator(table, pagination="local", page_size=20))


def main() -> None:
    layout = moderate_layout()
    layout.save(StringIO(), resources=INLINE, title="warm-up")  # imports, first render
    with tempfile.TemporaryDirectory() as tmp:
        t_plain = []
        for _ in range(3):
            start = time.perf_counter()
            layout.save(StringIO(), resources=INLINE, title="plain")
            t_plain.append(time.perf_counter() - start)
        t_offline, report = [], None
        for i in range(3):
            start = time.perf_counter()
            report = save_offline(layout, Path(tmp) / f"s{i}.html", title="offline")
            t_offline.append(time.perf_counter() - start)
        same = len({(Path(tmp) / f"s{i}.html").read_bytes() for i in range(3)}) == 1
    print(f"panel save(INLINE), best of 3:   {min(t_plain):6.2f} s")
    print(f"save_offline, best of 3:         {min(t_offline):6.2f} s")
    print(f"snapshot size:                   {report.size_bytes / 1e6:6.2f} MB")
    print(f"resources inlined:               {len(report.inlined)}")
    print(f"references dropped:              {len(report.dropped)} {list(report.dropped)}")
    print(f"three saves byte-identical:      {same}")


if __name__ == "__main__":
    main()
