"""Standard errors and t-statistics of time-means: HAC (Newey-West, Hansen-Hodrick), non-overlapping checks, Sharpe-ratio inference."""
