"""Benchmarks: coreference scores, the parallel UD treebanks, and copies of them with injected gender errors."""
