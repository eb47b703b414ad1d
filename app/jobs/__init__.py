"""Background work for the window: the job runner and the live nominal results."""
