"""Pictures of a results store: maps, plots and the HTML report (orchestration; drawing is in postproc)."""
