"""Layout pieces shared by the pages (pure functions: data in, Dash components out)."""
