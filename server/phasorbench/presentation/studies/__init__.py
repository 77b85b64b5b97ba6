"""Strings and rows of the studies (one module per study), for the page, the sheet and the terminal."""
