"""A drop-in plugin with a misspelled hook name (malformed on purpose)."""
from saltbench.models import hookimpl


@hookimpl
def register_modles(context):
    return []
