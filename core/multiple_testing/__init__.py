"""p-values of t-statistics and their adjustment for many tests (Benjamini-Hochberg, Bonferroni)."""
