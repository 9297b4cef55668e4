"""Pure figure builders: from stored results and display units to plotly figure dicts."""
