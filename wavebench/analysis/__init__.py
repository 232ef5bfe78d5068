"""Per-trial metrics, statistics and verdicts."""
