"""Benchmarks: coreference scores, the parallel UD treebanks, and copies with injected gender errors."""
