"""Cross-sectional regressions: Fama-MacBeth slopes and their time summary."""
