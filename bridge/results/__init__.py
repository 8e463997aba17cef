"""The results store, unfinished runs (partial stores, journals, resume) and viewer files."""
