"""Self-contained HTML snapshots that open from disk with the network off.

Panel's ``save(..., resources=INLINE)`` inlines the JavaScript bundles but
still points at the Panel CDN for style sheets (``ImportedStyleSheet`` models
in the serialized document, favicon links in the page head), and those style
sheets in turn reference fonts and images.  Opened from ``file://`` without a
network the page loses its styling.  :func:`save_offline` renders the layout
with Panel, then rewrites every fetchable reference it can find:

* ``<link rel=stylesheet>`` and ``<script src>`` in the page markup are
  replaced by the file's content read from the installed panel / bokeh
  packages;
* ``ImportedStyleSheet`` models in the document JSON become
  ``InlineStyleSheet`` models holding the same CSS;
* ``@import`` and ``url(...)`` inside any CSS are inlined (CSS text) or turned
  into ``data:`` URIs (fonts, images); ``@font-face`` rules keep only their
  WOFF2 sources, which every current browser reads;
* ``src``/``poster``/``srcset`` attributes pointing off the page inside HTML
  strings of the document are emptied.

A reference with no local copy is dropped and listed in the returned
:class:`OfflineReport` rather than left as a network link.

Bokeh gives every model a process-wide counter id and every page random
element and document ids, Panel names objects with a global counter and
marks some state with random UUIDs, and Python sets serialize in hash
order: ids, names and tokens are renumbered in order of appearance and set
entries sorted, so saves of the same layout produce byte-identical files,
in one process or in several.
"""
from __future__ import annotations

import html
import json
import re
import time
from contextlib import contextmanager
from dataclasses import dataclass, field
from io import StringIO
from pathlib import Path
from urllib.parse import urljoin

from orbitdeck.dashboard.offline_resources import (
    MARKUP_SRC, SCRIPT_OR_STYLE, STYLESHEET_MODELS, ResourceInliner,
    external_references, tag_attrs, unescape_json)

__all__ = ["OfflineReport", "save_offline", "render_offline", "escape_text",
           "external_references"]

# An empty inline icon keeps the browser from asking for /favicon.ico.
_EMPTY_ICON = '<link rel="icon" href="data:,">'

_AUTO_NAME = re.compile(r"^([A-Z][A-Za-z0-9]*?)(\d{5})$")
# Random version-4 UUIDs (bare hex or dashed), e.g. Tabulator's style-change tokens.
_UUID4 = re.compile(
    r"^[0-9a-f]{8}(-?)[0-9a-f]{4}(?:\1)4[0-9a-f]{3}(?:\1)[89ab][0-9a-f]{3}(?:\1)[0-9a-f]{12}$")
_LINK_TAG = re.compile(r"<link\b[^>]*>", re.I)


@dataclass(frozen=True)
class OfflineReport:
    """What :func:`save_offline` wrote and which references it rewrote.

    ``inlined`` lists the URLs whose content now sits inside the file,
    ``dropped`` the references removed because no local copy was found
    (their content is missing from the snapshot).
    """

    path: Path | None
    size_bytes: int
    seconds: float
    inlined: tuple[str, ...] = field(default=())
    dropped: tuple[str, ...] = field(default=())


def escape_text(s: object) -> str:
    """Escape free text for HTML (``&``, ``<``, ``>``, quotes)."""
    return html.escape(str(s), quote=True)


# ---------------------------------------------------------------------------
# The serialized Bokeh document
# ---------------------------------------------------------------------------

def _rewrite_doc(docs: dict, inliner: ResourceInliner) -> tuple[dict, dict[str, str]]:
    """Inline style sheets, neutralise remote markup sources, renumber ids.

    Returns the new document dict and the old-to-new mapping of model ids.
    """
    alias: dict[str, str] = {}        # duplicate style-sheet object -> first
    first_sheet: dict[tuple, str] = {}

    def css_value(value):
        return inliner.css(value, None) if isinstance(value, str) else value

    def markup(value: str) -> str:
        if "<" not in value and "&lt;" not in value:
            return value

        def _drop(m: re.Match) -> str:
            inliner.dropped[html.unescape(m.group(2))] = None
            return m.group(1)
        return MARKUP_SRC.sub(_drop, value)

    def walk(node):
        if isinstance(node, dict):
            if node.get("type") == "object" and node.get("name") in STYLESHEET_MODELS:
                attrs = dict(node.get("attributes", {}))
                url = attrs.pop("url", "")
                css = inliner.stylesheet(url) if url else ""
                sig = (node["name"], css, json.dumps(attrs, sort_keys=True))
                if sig in first_sheet:
                    alias[node["id"]] = first_sheet[sig]
                    return {"id": first_sheet[sig]}
                first_sheet[sig] = node["id"]
                attrs = {k: walk(v) for k, v in attrs.items()}
                attrs["css"] = css or ""
                return {"type": "object", "name": STYLESHEET_MODELS[node["name"]],
                        "id": node["id"], "attributes": attrs}
            if set(node) == {"id"} and node["id"] in alias:
                return {"id": alias[node["id"]]}
            if node.get("type") == "set" and isinstance(node.get("entries"), list):
                # Python sets serialize in hash order, which changes per process.
                entries = sorted((walk(v) for v in node["entries"]),
                                 key=lambda v: json.dumps(v, sort_keys=True))
                return {**node, "entries": entries}
            out = {}
            for k, v in node.items():
                if k == "stylesheets" and isinstance(v, list):
                    out[k] = [walk(css_value(s)) for s in v]
                elif k == "css" and isinstance(v, str):
                    out[k] = css_value(v)
                else:
                    out[k] = walk(v)
            return out
        if isinstance(node, list):
            return [walk(v) for v in node]
        if isinstance(node, str):
            return markup(node)
        return node

    docs = walk(docs)
    ids = _collect_ids(docs)
    return _renumber(docs, ids, {}, {}), ids


def _collect_ids(node, ids: dict[str, str] | None = None) -> dict[str, str]:
    """Model ids in order of first appearance, mapped to ``p1000``, ``p1001``..."""
    ids = {} if ids is None else ids
    if isinstance(node, dict):
        if "id" in node and isinstance(node["id"], str) and node["id"] not in ids:
            ids[node["id"]] = f"p{1000 + len(ids)}"
        for v in node.values():
            _collect_ids(v, ids)
    elif isinstance(node, list):
        for v in node:
            _collect_ids(v, ids)
    return ids


def _renumber(node, ids: dict[str, str], names: dict[str, str],
              tokens: dict[str, str], key: str | None = None):
    """Copy of `node` with model ids, automatic names and random tokens renumbered.

    ``names`` maps Panel's counter names (``Column00285``) and ``tokens``
    random UUIDs to sequential replacements, both filled in order of first
    appearance.
    """
    if isinstance(node, dict):
        return {ids.get(k, k): _renumber(v, ids, names, tokens, k) for k, v in node.items()}
    if isinstance(node, list):
        return [_renumber(v, ids, names, tokens) for v in node]
    if not isinstance(node, str):
        return node
    if node in ids:
        return ids[node]
    if _UUID4.match(node):
        if node not in tokens:
            new = f"0000000000004000800{len(tokens) + 1:013x}"
            if "-" in node:
                new = "-".join((new[:8], new[8:12], new[12:16], new[16:20], new[20:]))
            tokens[node] = new
        return tokens[node]
    m = _AUTO_NAME.match(node) if key == "name" else None
    if m:
        if node not in names:
            names[node] = f"{m.group(1)}{len(names) + 1:05d}"
        return names[node]
    return node


# ---------------------------------------------------------------------------
# The page
# ---------------------------------------------------------------------------

def _rewrite_markup(text: str, inliner: ResourceInliner) -> str:
    """Replace ``<link>`` tags of a stretch of markup (outside scripts)."""
    def _link(m: re.Match) -> str:
        attrs = tag_attrs(m.group(0))
        href = attrs.get("href", "").strip()
        rel = attrs.get("rel", "").lower().split()
        if not href or href.startswith("data:"):
            return m.group(0) if href else ""
        target = urljoin("https:", href) if href.startswith("//") else href
        if "stylesheet" in rel:
            css = inliner.stylesheet(target)
            if css is not None:
                media = attrs.get("media")
                media_attr = f' media="{escape_text(media)}"' if media else ""
                return f"<style{media_attr}>\n{_safe_style(css)}\n</style>"
        else:
            inliner.dropped[target] = None
        return ""
    return _LINK_TAG.sub(_link, text)


def _safe_style(css: str) -> str:
    """CSS that cannot close its ``<style>`` element early."""
    return re.sub(r"</(style)", r"<\\/\1", css, flags=re.I)


def _rewrite_block(m: re.Match, inliner: ResourceInliner) -> str:
    """A ``<style>`` or ``<script>`` element (a SCRIPT_OR_STYLE match) made local."""
    kind, attr_text, body = m.group(1).lower(), m.group(2), m.group(3)
    if kind == "style":
        return f"<style{attr_text}>{_safe_style(inliner.css(body, None))}</style>"
    attrs = tag_attrs(f"<script{attr_text}>")
    if not attrs.get("src"):
        return m.group(0)
    code = inliner.script(attrs["src"])
    if code is None:
        return ""
    kept = "".join(f' {k}="{escape_text(v)}"' for k, v in attrs.items()
                   if k not in {"src", "integrity", "crossorigin", "async", "defer"})
    code = re.sub(r"</(script)", r"<\\/\1", code, flags=re.I)
    return f"<script{kept}>{code}</script>"


def _rewrite_fragment(text: str, inliner: ResourceInliner) -> str:
    """An HTML fragment with its links, style blocks and script sources made local."""
    pieces, pos = [], 0
    for m in SCRIPT_OR_STYLE.finditer(text):
        pieces.append(_rewrite_markup(text[pos:m.start()], inliner))
        pieces.append(_rewrite_block(m, inliner))
        pos = m.end()
    pieces.append(_rewrite_markup(text[pos:], inliner))
    return "".join(pieces)


def _rewrite_page(page: str, inliner: ResourceInliner, extra_head: str) -> str:
    """Make a page rendered by Panel self-contained and give it stable ids."""
    # Split the page into markup and <script>/<style> blocks; only real tags
    # are touched, never text inside the bundled JavaScript.
    pieces: list[str] = []
    head_at = json_at = None
    json_id = json_body = ""
    pos = 0
    for m in SCRIPT_OR_STYLE.finditer(page):
        markup = page[pos:m.start()]
        if head_at is None and "</head>" in markup:
            head_at = len(pieces)
        pieces.append(_rewrite_markup(markup, inliner))
        attrs = tag_attrs(f"<{m.group(1)}{m.group(2)}>")
        if json_at is None and attrs.get("type") == "application/json" and attrs.get("id"):
            json_at, json_id, json_body = len(pieces), attrs["id"], m.group(3)
            pieces.append("")
        else:
            pieces.append(_rewrite_block(m, inliner))
        pos = m.end()
    if head_at is None and "</head>" in page[pos:]:
        head_at = len(pieces)
    pieces.append(_rewrite_markup(page[pos:], inliner))
    if json_at is None or head_at is None:
        raise RuntimeError("the page rendered by Panel has no <head> or no Bokeh document; "
                           "pass a plain layout, not a template")

    docs = json.loads(unescape_json(json_body))
    docs, ids = _rewrite_doc(docs, inliner)
    from bokeh.core.json_encoder import serialize_json
    # a fixed prefix: a page holds one document, and a content hash would make any
    # change of text (an export time) ripple through every id of the file
    digest = "page"
    uuids = {json_id: f"{digest}-json"}
    uuids.update((old, f"{digest}-doc{n}") for n, old in enumerate(docs))
    docs = {uuids[k]: v for k, v in docs.items()}
    pieces[json_at] = (f'<script type="application/json" id="{uuids[json_id]}">'
                       f'{html.escape(serialize_json(docs), quote=False)}</script>')

    # Root <div id=.. data-root-id=..> elements just before the JSON, and the
    # render_items of the embedding script after it.
    before = json_at - 1
    for n, m in enumerate(re.finditer(r'<div id="([^"]+)" data-root-id="', pieces[before])):
        uuids.setdefault(m.group(1), f"{digest}-root{n}")
    items = None
    for piece in pieces[json_at + 1:]:
        m = re.search(r"const render_items = (\[.*?\]);\n", piece)
        if m:
            items = json.loads(m.group(1))
            break
    if items is None:
        raise RuntimeError("the page rendered by Panel has no render items")
    for n, item in enumerate(items):
        for elementid in [item.get("elementid"), *(item.get("roots") or {}).values()]:
            if elementid:
                uuids.setdefault(elementid, f"{digest}-root{n}")
    mapping = {**uuids, **ids}
    alternatives = "|".join(re.escape(k) for k in sorted(mapping, key=len, reverse=True))
    quoted = re.compile(r"(?<=[\"'])(" + alternatives + r")(?=[\"'])")
    for i in [before, *range(json_at + 1, len(pieces))]:
        pieces[i] = quoted.sub(lambda t: mapping[t.group(1)], pieces[i])

    head_extra = _rewrite_fragment(extra_head, inliner) if extra_head else ""
    pieces[head_at] = pieces[head_at].replace("</head>", _EMPTY_ICON + head_extra + "</head>", 1)
    return "".join(pieces)


# ---------------------------------------------------------------------------
# Public API
# ---------------------------------------------------------------------------

@contextmanager
def _all_tabs_built(layout):
    """Build every tab, not only the visible one, while saving.

    ``Tabs(dynamic=True)`` leaves hidden tabs empty until a server fills
    them, which a static file has not got.  The flag is switched off for the
    save without firing watchers, so live views of the same layout are left
    alone, and restored afterwards.
    """
    import panel as pn
    from param.parameterized import discard_events

    select = getattr(layout, "select", None)
    tabs = [t for t in (select(pn.Tabs) if select else []) if t.dynamic]
    for t in tabs:
        with discard_events(t):
            t.dynamic = False
    try:
        yield
    finally:
        for t in tabs:
            with discard_events(t):
                t.dynamic = True


def render_offline(layout, title: str, extra_head: str = "") -> tuple[str, OfflineReport]:
    """Render a Panel layout to self-contained HTML text.

    Parameters
    ----------
    layout : panel.viewable.Viewable
        A plain Panel layout (``pn.Column``, ``pn.Tabs``...) holding HoloViews
        panes, HTML panes, Tabulator tables and the like.  Templates are not
        supported: several load ES modules, which ``file://`` refuses.
    title : str
        Page title; escaped here.
    extra_head : str
        Raw HTML appended to ``<head>`` (e.g. ``<meta>`` tags).  It is the
        caller's markup, inserted as given apart from stylesheet links, which
        are inlined like the rest.

    Returns
    -------
    (str, OfflineReport)
        The page text and what was inlined or dropped.
    """
    from bokeh.document import Document
    from bokeh.resources import INLINE
    from panel.io.state import set_curdoc
    from panel.template.base import BaseTemplate

    if isinstance(layout, BaseTemplate):
        raise TypeError("an offline snapshot takes a plain layout (pn.Column, pn.Tabs...), "
                        f"not the template {type(layout).__name__}: templates load "
                        "ES modules, which browsers refuse from file://")
    t0 = time.perf_counter()
    buf = StringIO()
    # Panel caches style sheets per current document: inside a served session
    # the inline-mode sheets rendered here would land in the live page's cache
    # (and send it to the CDN), so the render gets a document of its own.
    with _all_tabs_built(layout), set_curdoc(Document()):
        layout.save(buf, title=str(title), resources=INLINE,
                    template_variables={"apple_icon": "", "app_favicon": ""})
    inliner = ResourceInliner()
    page = _rewrite_page(buf.getvalue(), inliner, extra_head)
    report = OfflineReport(
        path=None, size_bytes=len(page.encode("utf-8")),
        seconds=time.perf_counter() - t0,
        inlined=tuple(inliner.inlined), dropped=tuple(inliner.dropped))
    return page, report


def save_offline(layout, path, title: str, extra_head: str = "") -> OfflineReport:
    """Write `layout` as ONE HTML file that renders from disk with no network.

    Every plot keeps its Bokeh tools (pan, zoom, hover); tables and tabs work
    client-side.  Anything needing a live Python server (streams, ``pn.bind``
    callbacks, ``link_selections``) is frozen in its current state.  The
    output is byte-identical for identical layouts.

    Parameters
    ----------
    layout : panel.viewable.Viewable
        Plain Panel layout (no template).
    path : str or os.PathLike
        Output file; ``.html`` is not appended.
    title : str
        Page title (escaped).
    extra_head : str
        Raw HTML appended to ``<head>``.

    Returns
    -------
    OfflineReport
    """
    t0 = time.perf_counter()
    out = Path(path)
    if not out.parent.is_dir():
        raise FileNotFoundError(f"cannot write snapshot {out}: folder {out.parent} does not exist")
    page, report = render_offline(layout, title, extra_head)
    data = page.encode("utf-8")
    out.write_bytes(data)
    return OfflineReport(path=out, size_bytes=len(data),
                         seconds=time.perf_counter() - t0,
                         inlined=report.inlined, dropped=report.dropped)
