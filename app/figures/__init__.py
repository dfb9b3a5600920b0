"""Pure figure functions (result in, plotly figure out) on one shared template."""
