"""Strings and rows of the studies, shown by the page and the sheet alike."""
