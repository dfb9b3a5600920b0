"""Results as tables and JSON: the screen of one date (screen.py), summary.json and the IC table (summary.py). Codes and numbers only; words are the app's."""
