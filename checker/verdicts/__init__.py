"""Scan -> item results: a status for every item (decide, with the thresholds in fitted) and the Report model that
every renderer reads (report)."""
