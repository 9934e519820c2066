"""Jupyter widgets (ipywidgets + bqplot) on the shared state object; the only layer importing them."""
