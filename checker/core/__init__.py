"""What every stage uses and that imports no stage: error types and exit codes, limits and time bounds, the
configuration, atomic output and progress bars."""
