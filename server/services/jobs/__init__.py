"""Background work: the job queue, the worker, and the field recompute it runs."""
