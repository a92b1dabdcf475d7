"""Sphinx configuration of the matprops documentation site.

Built by ``python docs/build.py`` (see the README's "Documentation"), which copies the
hand-written pages into ``build/docs/source`` beside the pages it generates from the
catalogue (one per quantity and per release, the command-line reference).
"""

import matprops

project = "matprops"
author = "matprops developers"
copyright = "matprops developers, MIT licence"
release = version = matprops.__version__

extensions = ["myst_parser"]
myst_enable_extensions = ["colon_fence", "deflist", "dollarmath"]
myst_heading_anchors = 3
source_suffix = {".md": "markdown"}
root_doc = "index"
exclude_patterns = ["README*", "*.py"]
suppress_warnings = ["myst.header"]

html_theme = "pydata_sphinx_theme"
html_title = f"matprops {version}"
html_show_sourcelink = False
html_theme_options = {
    "navigation_with_keys": False,
    "show_toc_level": 2,
    "navbar_end": ["navbar-icon-links"],  # no theme switcher script: a plain, light site
    "footer_start": ["copyright"],
    "footer_end": [],
}
html_context = {"default_mode": "light"}
html_static_path = ["_static"]
html_favicon = "_static/matprops.svg"  # browsers ask for one: no 404 in the console
