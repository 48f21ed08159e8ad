"""Workflows layer: discharge scenarios, scans and analysis built on physics and numerics."""
