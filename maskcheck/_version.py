"""Version of the package and of the mask-file schema it reads."""

__all__ = ["__version__", "MASK_SCHEMA_VERSION"]

__version__ = "0.1.0"

#: Newest mask-file ``schema_version`` this release reads (older ones keep loading).
MASK_SCHEMA_VERSION = 5
