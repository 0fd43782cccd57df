"""Benchmarks and accuracy on simulated caseloads: `python -m tools.bench`."""
