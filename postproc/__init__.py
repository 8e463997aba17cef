"""Field-level work over a model: recovery over cells × cases, envelopes, hot
spots, solver comparison, rendering, plots and the HTML report.

Takes arrays and meshes, never file names."""
