"""Local copies of the resources a Panel page would fetch, and a scanner for
references that would still leave the page.

Used by :mod:`orbitdeck.dashboard.offline`; see there for the whole picture.
"""
from __future__ import annotations

import base64
import html
import json
import mimetypes
import re
from pathlib import Path
from urllib.parse import unquote, urljoin, urlsplit
from urllib.request import url2pathname

# Media types for data: URIs (mimetypes lacks several font types).
_MIME = {".woff2": "font/woff2", ".woff": "font/woff", ".ttf": "font/ttf",
         ".otf": "font/otf", ".eot": "application/vnd.ms-fontobject",
         ".svg": "image/svg+xml", ".png": "image/png", ".gif": "image/gif",
         ".jpg": "image/jpeg", ".jpeg": "image/jpeg", ".ico": "image/x-icon",
         ".css": "text/css", ".js": "text/javascript", ".webp": "image/webp"}

# A <script> or <style> element; its text is raw up to the closing tag.
SCRIPT_OR_STYLE = re.compile(
    r"<(script|style)\b([^>]*)>(.*?)</\1\s*>", re.I | re.S)
_ATTR = re.compile(r"""([\w:-]+)(?:\s*=\s*(?:"([^"]*)"|'([^']*)'|([^\s>]+)))?""")
_CSS_IMPORT = re.compile(
    r"""@import\s+(?:url\(\s*)?(?:"([^"]*)"|'([^']*)'|([^\s;'")]+))\s*\)?"""
    r"""\s*([^;]*);""", re.I)
_CSS_URL = re.compile(
    r"""url\(\s*(?:"([^"]*)"|'([^']*)'|([^)'"\s]*))\s*\)""", re.I)
_FONT_FACE = re.compile(r"@font-face\s*\{([^}]*)\}", re.I)
# A remote source attribute inside HTML text, raw or entity-escaped.
MARKUP_SRC = re.compile(
    r"""(\b(?:src|srcset|poster|data|background)\s*=\s*"""
    r"""(?:"|'|&quot;|&\#x27;|&\#39;)?\s*)"""
    r"""((?:https?:)?//.*?)(?=["'\s>]|&quot;|&\#x27;|&\#39;|$)""", re.I)
STYLESHEET_MODELS = {"ImportedStyleSheet": "InlineStyleSheet",
                     "GlobalImportedStyleSheet": "GlobalInlineStyleSheet"}


class ResourceInliner:
    """Maps resource URLs to files of the installed packages and inlines them.

    Known locations: the Panel CDN (``panel/dist``), Bokeh's CDN
    (``bokeh/server/static/js``), CDNs of registered Bokeh extensions, and
    npm CDNs whose packages Panel bundles under ``panel/dist/bundled``.
    Only files inside those packages are read.  ``inlined`` and ``dropped``
    collect, in order, what was embedded and what had no local copy.
    """

    def __init__(self) -> None:
        import bokeh
        import panel
        from panel.config import config
        from panel.io import resources as pres

        self.panel_cdn = pres.CDN_DIST
        self.panel_dist = Path(pres.DIST_DIR)
        self.bundle_dir = Path(pres.BUNDLE_DIR)
        self.bokeh_js = Path(bokeh.__file__).parent / "server" / "static" / "js"
        self.bokeh_version = bokeh.__version__
        self.npm_cdns = tuple(dict.fromkeys(
            p.rstrip("/") + "/" for p in (config.npm_cdn,
                                          "https://cdn.jsdelivr.net/npm",
                                          "https://unpkg.com")))
        self.extensions = {cdn: Path(p) for p, cdn in pres.EXTENSION_CDN.items()}
        roots = [Path(panel.__file__).parent, Path(bokeh.__file__).parent,
                 *self.extensions.values()]
        self.allowed_roots = [r.resolve() for r in roots]
        self.site = Path(panel.__file__).parent.parent.resolve()
        self.inlined: dict[str, None] = {}
        self.dropped: dict[str, None] = {}
        self._css_cache: dict[tuple[str, str | None], str] = {}

    def _label(self, url: str) -> str:
        """Short name of an inlined resource for the report."""
        if url.startswith("file:"):
            path = Path(url2pathname(unquote(urlsplit(url).path)))
            return path.relative_to(self.site).as_posix() if path.is_relative_to(self.site) else url
        return url

    # -- lookup ---------------------------------------------------------
    def _within_packages(self, path: Path) -> Path | None:
        try:
            real = path.resolve()
        except OSError:
            return None
        if real.is_file() and any(real.is_relative_to(r) for r in self.allowed_roots):
            return real
        return None

    def local_path(self, url: str) -> Path | None:
        """Local file of the installed packages that `url` points to."""
        parts = urlsplit(url)
        bare = f"{parts.scheme}://{parts.netloc}{parts.path}" if parts.scheme else parts.path
        if parts.scheme == "file":
            return self._within_packages(Path(url2pathname(unquote(parts.path))))
        candidates: list[Path] = []
        if bare.startswith(self.panel_cdn):
            candidates.append(self.panel_dist / unquote(bare[len(self.panel_cdn):]))
        for cdn, folder in self.extensions.items():
            if bare.startswith(cdn):
                candidates.append(folder / unquote(bare[len(cdn):].lstrip("/")))
        m = re.match(r"https?://cdn\.bokeh\.org/bokeh/(?:release|dev)/"
                     r"(bokeh(?:-[a-z]+)?)-" + re.escape(self.bokeh_version) +
                     r"(\.min)?\.js$", bare)
        if m:
            candidates.append(self.bokeh_js / f"{m.group(1)}{m.group(2) or ''}.js")
        for cdn in self.npm_cdns:
            if bare.startswith(cdn):
                rest = unquote(bare[len(cdn):])
                candidates.append(self.bundle_dir / rest)
                candidates.extend(sorted(self.bundle_dir.glob(f"*/{rest}")))
        for cand in candidates:
            found = self._within_packages(cand)
            if found is not None:
                return found
        return None

    # -- CSS ------------------------------------------------------------
    def stylesheet(self, url: str, _seen: frozenset = frozenset()) -> str | None:
        """CSS text of the style sheet at `url`, itself made self-contained."""
        path = self.local_path(url)
        if path is None or url in _seen:
            self.dropped[url] = None
            return None
        self.inlined[self._label(url)] = None
        text = path.read_text(encoding="utf-8")
        return self.css(text, path.as_uri(), _seen | {url})

    def css(self, text: str, base: str | None, _seen: frozenset = frozenset()) -> str:
        """Inline ``@import`` and ``url(...)`` references of CSS `text`."""
        key = (text, base)
        if not _seen and key in self._css_cache:
            return self._css_cache[key]

        def _import(m: re.Match) -> str:
            ref = next(g for g in m.groups()[:3] if g is not None)
            target = self._absolute(ref, base)
            inner = self.stylesheet(target, _seen) if target else None
            if inner is None:
                if target is None:
                    self.dropped[ref] = None
                return ""
            media = m.group(4).strip()
            return f"@media {media} {{\n{inner}\n}}" if media else inner

        out = _CSS_IMPORT.sub(_import, text)
        out = _FONT_FACE.sub(lambda m: "@font-face {" + woff2_only(m.group(1)) + "}", out)
        out = _CSS_URL.sub(lambda m: self._url(m, base), out)
        if not _seen:
            self._css_cache[key] = out
        return out

    def _absolute(self, ref: str, base: str | None) -> str | None:
        ref = ref.strip()
        if urlsplit(ref).scheme or ref.startswith("//"):
            return urljoin("https:", ref) if ref.startswith("//") else ref
        return urljoin(base, ref) if base else None

    def _url(self, m: re.Match, base: str | None) -> str:
        ref = next((g for g in m.groups() if g is not None), "").strip()
        if not ref or ref.startswith(("data:", "#")):
            return m.group(0)
        target = self._absolute(ref, base)
        path = self.local_path(target) if target else None
        if path is None:
            self.dropped[target or ref] = None
            return 'url("data:,")'
        self.inlined[self._label(target)] = None
        return f'url("{data_uri(path)}")'

    def script(self, url: str) -> str | None:
        path = self.local_path(url)
        if path is None:
            self.dropped[url] = None
            return None
        self.inlined[self._label(url)] = None
        return path.read_text(encoding="utf-8")


def data_uri(path: Path) -> str:
    """The file at `path` as a base64 ``data:`` URI."""
    mime = _MIME.get(path.suffix.lower()) or mimetypes.guess_type(path.name)[0] \
        or "application/octet-stream"
    return f"data:{mime};base64," + base64.b64encode(path.read_bytes()).decode("ascii")


def split_outside(value: str, sep: str) -> list[str]:
    """Split CSS text on `sep` where it stands outside parentheses and quotes."""
    parts, depth, quote, start = [], 0, "", 0
    for i, ch in enumerate(value):
        if quote:
            quote = "" if ch == quote else quote
        elif ch in "\"'":
            quote = ch
        elif ch == "(":
            depth += 1
        elif ch == ")":
            depth -= 1
        elif ch == sep and depth == 0:
            parts.append(value[start:i])
            start = i + 1
    parts.append(value[start:])
    return parts


def woff2_only(body: str) -> str:
    """Keep only the WOFF2 entries of the ``src`` descriptors of a @font-face."""
    decls = split_outside(body, ";")
    srcs = [i for i, d in enumerate(decls) if d.strip().lower().startswith("src")]
    is_woff2 = lambda e: "woff2" in e.lower()  # noqa: E731
    if not any(is_woff2(decls[i]) for i in srcs):
        return body
    kept = []
    for i, decl in enumerate(decls):
        if i in srcs:
            name, _, value = decl.partition(":")
            entries = [e for e in split_outside(value, ",") if is_woff2(e)]
            if not entries:
                continue
            decl = f"{name}:{','.join(entries)}"
        kept.append(decl)
    return ";".join(kept)


def tag_attrs(tag: str) -> dict[str, str]:
    """Attributes of one start tag, names lower-cased, values unescaped."""
    inner = re.sub(r"^<[\w-]+", "", tag).rstrip(">")
    out = {}
    for m in _ATTR.finditer(inner):
        value = next((g for g in m.groups()[1:] if g is not None), "")
        out[m.group(1).lower()] = html.unescape(value)
    return out


def unescape_json(text: str) -> str:
    """Exact inverse of ``html.escape(s, quote=False)`` (what Bokeh applies)."""
    return text.replace("&lt;", "<").replace("&gt;", ">").replace("&amp;", "&")


def external_references(page: str) -> list[str]:
    """Fetchable references left in a page: links, sources, CSS urls, style sheets.

    Looks at real tags outside scripts (``<link href>``, ``<script src>``,
    ``<img|iframe|source|video|audio|embed|object src/data/poster>``),
    ``@import``/``url()`` in ``<style>`` blocks, and in the Bokeh document
    JSON at ``ImportedStyleSheet`` models, ``url()``/``@import`` in CSS
    strings and remote ``src``-like attributes in HTML strings.  Namespace
    URIs and URLs in comments or JavaScript string literals are not
    references and are not reported.  ``data:`` and ``#fragment`` are local.
    """
    found: list[str] = []

    def remote(ref: str) -> bool:
        ref = ref.strip()
        return bool(ref) and not ref.startswith(("data:", "#", "blob:", "about:"))

    def scan_css(css: str) -> None:
        for m in _CSS_IMPORT.finditer(css):
            found.append(next(g for g in m.groups()[:3] if g is not None))
        for m in _CSS_URL.finditer(_CSS_IMPORT.sub("", css)):
            ref = next((g for g in m.groups() if g is not None), "")
            if remote(ref):
                found.append(ref)

    tag_re = re.compile(r"<(link|script|img|iframe|source|video|audio|embed|object|track)\b[^>]*>", re.I)
    pos = 0
    blocks = list(SCRIPT_OR_STYLE.finditer(page))
    stretches = []
    for m in blocks:
        stretches.append(page[pos:m.start()] + f"<{m.group(1)}{m.group(2)}>")
        pos = m.end()
        if m.group(1).lower() == "style":
            scan_css(m.group(3))
        attrs = tag_attrs(f"<{m.group(1)}{m.group(2)}>")
        if m.group(1).lower() == "script" and attrs.get("type") == "application/json":
            doc_text = unescape_json(m.group(3))
            try:
                doc = json.loads(doc_text)
            except ValueError:
                found.append("<unparseable document JSON>")
                continue
            _scan_doc(doc, found, scan_css)
    stretches.append(page[pos:])
    for stretch in stretches:
        for t in tag_re.finditer(stretch):
            attrs = tag_attrs(t.group(0))
            for key in ("href", "src", "data", "poster", "srcset"):
                if key in attrs and remote(attrs[key]):
                    found.append(attrs[key])
    return found


def _scan_doc(node, found: list[str], scan_css) -> None:
    if isinstance(node, dict):
        if node.get("name") in STYLESHEET_MODELS:
            found.append(node.get("attributes", {}).get("url", "<style sheet>"))
        for k, v in node.items():
            if k in ("stylesheets", "css"):
                for s in (v if isinstance(v, list) else [v]):
                    if isinstance(s, str):
                        scan_css(s)
            _scan_doc(v, found, scan_css)
    elif isinstance(node, list):
        for v in node:
            _scan_doc(v, found, scan_css)
    elif isinstance(node, str) and ("<" in node or "&lt;" in node):
        found.extend(html.unescape(m.group(2)) for m in MARKUP_SRC.finditer(node))
