"""ValueSift dashboard (Dash) and command line."""
