"""Interfaces layer: command line, result files and plots."""
