"""Results: tables and summaries for people, plots, build sheets, the flux map, run comparison."""
