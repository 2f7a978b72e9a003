"""A drop-in plugin that imports a module nobody has (malformed on purpose)."""
import saltbench_corpus_module_that_does_not_exist  # noqa: F401
