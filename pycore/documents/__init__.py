"""Case documents: reading and validating JSON and CSV, data tables, batch runs, text summaries."""
