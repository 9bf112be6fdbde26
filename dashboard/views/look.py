"""The page's look: a light paper page, a header band, ruled cards and tab labels of our own.

No web font (the page must work with no network): a serif face for the
names of things, the system's sans-serif for everything else, tabular
figures for numbers. Panel components draw inside shadow roots, so the look
reaches them three ways: inherited properties and CSS variables set on the
page's root, a style sheet per component kind (cards, tabs), and the
page's own ``<style>`` for the body.
"""

from __future__ import annotations

from . import palette

SANS = '"Noto Sans", "Segoe UI", "DejaVu Sans", "Helvetica Neue", Arial, sans-serif'
SERIF = '"Noto Serif", Georgia, "DejaVu Serif", "Times New Roman", serif'

#: the body of a served page or a snapshot (outside every component)
PAGE_CSS = f"""
html, body {{ margin: 0; padding: 0; background: {palette.PAPER}; color: {palette.INK}; font-family: {SANS}; }}
"""

#: inherited by every component through its shadow root
ROOT_STYLES = {
    "background": palette.PAPER, "color": palette.INK, "font-family": SANS,
    "--bokeh-base-font": SANS, "--panel-primary-color": palette.ACCENT, "--font-family": SANS,
    "font-variant-numeric": "tabular-nums",
}

HEADER_CSS = f"""
:host {{ width: 100%; }}
.od-band {{ display: flex; align-items: baseline; gap: 18px; padding: 10px 22px 8px 22px;
  border-bottom: 3px double {palette.RULE}; background: #ffffff; }}
.od-mark {{ font-family: {SANS}; font-variant: small-caps; letter-spacing: 0.14em; font-size: 15px;
  color: {palette.ACCENT}; font-weight: 700; white-space: nowrap; }}
.od-mark::before {{ content: ""; display: inline-block; width: 10px; height: 10px; margin-right: 8px;
  border: 2px solid {palette.ACCENT}; border-radius: 50%; box-shadow: 14px 0 0 -3px {palette.STAR_COLOUR};
  vertical-align: -1px; }}
.od-name {{ font-family: {SERIF}; font-size: 22px; color: {palette.INK}; }}
.od-star {{ font-size: 12.5px; color: {palette.MUTED_INK}; padding: 4px 22px 0 22px; }}
"""

CARD_CSS = f"""
:host {{ background: #ffffff; border: 1px solid #dcd6c8; border-left: 3px solid {palette.ACCENT};
  border-radius: 2px; box-shadow: none; }}
.card-header {{ background: transparent; border-bottom: 1px solid #ece7dc; padding: 2px 8px; }}
.card-button {{ background: transparent; color: {palette.ACCENT}; }}
"""
CARD_TITLE_CSS = f"""
.od-card-title {{ font-variant: small-caps; letter-spacing: 0.08em; font-size: 14px; font-weight: 700;
  color: {palette.INK}; }}
"""

TABS_CSS = f"""
/* the tab titles wrap onto a second line rather than hide beyond the page's width */
.bk-header {{ border-bottom: 1px solid {palette.RULE}; overflow: visible; }}
.bk-headers-wrapper {{ flex-wrap: wrap; overflow: visible; }}
.bk-tab {{ font-family: {SERIF}; font-size: 15px; color: {palette.MUTED_INK}; border: none;
  border-bottom: 3px solid transparent; background: transparent; padding: 6px 11px 4px 11px; }}
.bk-tab.bk-active {{ color: {palette.INK}; border: none; border-bottom: 3px solid {palette.ACCENT};
  background: transparent; }}
.bk-tab:hover {{ color: {palette.INK}; }}
"""

#: titles above tables and plots, and of the views in a snapshot
SECTION_CSS = f"""
h3.od-table-title {{ font-family: {SERIF}; font-weight: normal; font-size: 15px; margin: 8px 0 2px 0;
  color: {palette.INK}; border-bottom: 1px solid #ece7dc; }}
h2.od-view-title {{ font-family: {SERIF}; font-weight: normal; font-size: 21px; margin: 18px 0 4px 0;
  color: {palette.INK}; border-bottom: 2px solid {palette.ACCENT}; }}
"""

ALERT_CSS = f"""
.od-alert {{ border-left: 4px solid #c99a2e; background: #fbf3df; color: {palette.WARNING_INK};
  padding: 5px 10px; font-size: 12.5px; max-height: 9.5em; overflow-y: auto; }}
.od-alert ul {{ margin: 2px 0 0 0; padding-left: 18px; }}
.od-caution {{ font-size: 12px; color: {palette.MUTED_INK}; margin: 2px 0; }}
"""


def header_html(system_name: str, star_line: str) -> str:
    """The header band (``system_name`` and ``star_line`` already escaped)."""
    return (f'<div class="od-band" role="banner"><span class="od-mark">orbitdeck</span>'
            f'<span class="od-name">{system_name}</span></div><div class="od-star">{star_line}</div>')
