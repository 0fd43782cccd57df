"""Benchmarks and accuracy on simulated caseloads: `python -m caseload.bench`."""
