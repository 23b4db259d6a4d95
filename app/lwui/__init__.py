"""Shared pieces of the likewise web front end: state, cached library, widgets and plots."""
