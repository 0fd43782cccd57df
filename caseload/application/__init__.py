"""The use cases: who may do what, in one transaction with its audit."""
