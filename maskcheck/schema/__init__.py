"""The JSON Schema of mask files, shipped as a versioned file (package data).

``mask-schema-v<N>.json`` describes ``schema_version`` N of the mask-file
format (its ``$id`` names the version); read it with
:func:`maskcheck.masks.schema.shipped_json_schema` or print it with
``maskcheck masks schema``.  It is generated from the pydantic models
(:func:`maskcheck.masks.schema.mask_json_schema`), and
``tests/test_mask_schema_file.py`` checks that the file equals what the models
generate.
"""

__all__: list[str] = []
