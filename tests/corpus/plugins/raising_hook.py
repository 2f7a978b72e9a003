"""A drop-in plugin whose register_models itself raises (malformed on purpose)."""
from saltbench.models import hookimpl


@hookimpl
def register_models(context):
    raise RuntimeError("corpus plugin refuses to register")
