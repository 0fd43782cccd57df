"""Development tools: the chart simulator, demo authoring and the benchmark. Not shipped in the package."""
