"""A drop-in plugin with a syntax error (malformed on purpose)."""
from saltbench.models import hookimpl


@hookimpl
def register_models(context)
    return []
