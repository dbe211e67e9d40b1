"""Page-level style the widgets cannot set through their layouts: the side panel's tab bar.

ipywidgets lays a ``Tab``'s titles in one row of fixed-width tabs, so nine titles in a panel of
about 600 px are cut ("Compa", "Elevat"). The rules below let each tab take the width of its
title and the row wrap onto a second line. They are scoped to the planner's own classes.
"""

from __future__ import annotations

import ipywidgets as w

__all__ = ["PAGE_CSS", "page_style"]

PAGE_CSS = """
.eaveline-side > .lm-TabBar, .eaveline-side > .p-TabBar {
  height: auto !important; min-height: 0 !important; max-height: none !important;
  overflow: visible !important;
}
.eaveline-side .lm-TabBar-content, .eaveline-side .p-TabBar-content {
  flex-wrap: wrap !important; height: auto !important;
}
.eaveline-side .lm-TabBar-tab, .eaveline-side .p-TabBar-tab {
  flex: 0 0 auto !important; min-width: 0 !important; max-width: none !important;
  padding: 0 10px !important;
}
.eaveline-side .lm-TabBar-tabLabel, .eaveline-side .p-TabBar-tabLabel {
  overflow: visible !important; text-overflow: clip !important;
}
"""


def page_style() -> w.HTML:
    """Return an invisible HTML widget that carries :data:`PAGE_CSS` into the page."""
    style = w.HTML(f"<style>{PAGE_CSS}</style>", layout=w.Layout(height="0px", margin="0"))
    style.add_class("eaveline-page-style")
    return style
