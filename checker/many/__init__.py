"""Many documents: the batch runner (local processes or Dask) and what is built from many reports: the committee's
screen, the corpus audit, the comparison of two versions, agreement with a user's labels, threshold fitting and the
statistics they share."""
