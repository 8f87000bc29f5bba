"""The JSON Schema of mask files ships as a versioned file equal to the one the models generate.

If this test fails after a change to the models, write the file anew and commit it with the change:

    python -c "from maskcheck.masks.schema import generated_json_schema_text as g, SCHEMA_FILE; \
open('maskcheck/schema/' + SCHEMA_FILE, 'w', encoding='utf-8').write(g())"

A new schema version ships a new file (``mask-schema-v<N>.json``): bump MASK_SCHEMA_VERSION in
``maskcheck/_version.py`` and write it the same way.
"""

from __future__ import annotations

import json
import tomllib
from importlib import resources
from pathlib import Path

import pytest

import maskcheck
from maskcheck.cli import main
from maskcheck.masks.schema import (
    MASK_SCHEMA_ID,
    SCHEMA_FILE,
    generated_json_schema_text,
    mask_json_schema,
    shipped_json_schema,
    shipped_json_schema_text,
)

LIBRARY = Path(str(resources.files("maskcheck.mask_library")))


def test_the_shipped_file_equals_the_generated_schema():
    # regenerate: see the module docstring
    assert shipped_json_schema_text() == generated_json_schema_text()
    assert shipped_json_schema() == mask_json_schema()


def test_the_file_is_named_and_identified_by_the_format_version():
    schema = shipped_json_schema()
    assert SCHEMA_FILE == f"mask-schema-v{maskcheck.MASK_SCHEMA_VERSION}.json"
    assert schema["$id"] == MASK_SCHEMA_ID and schema["$id"].endswith(f"v{maskcheck.MASK_SCHEMA_VERSION}")
    version = schema["properties"]["schema_version"]
    assert (version["minimum"], version["maximum"]) == (1, maskcheck.MASK_SCHEMA_VERSION)
    # the version sits beside the package version
    assert "MASK_SCHEMA_VERSION" in maskcheck.__all__ and isinstance(maskcheck.MASK_SCHEMA_VERSION, int)


def test_masks_schema_prints_the_shipped_file(capsys):
    assert main(["masks", "schema"]) == 0
    assert capsys.readouterr().out == shipped_json_schema_text()


def test_the_shipped_library_validates_against_the_schema():
    # Reference library: jsonschema (Draft 2020-12) checks the schema and each shipped mask file
    jsonschema = pytest.importorskip("jsonschema")
    schema = shipped_json_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    files = sorted(LIBRARY.glob("*.toml"))
    assert files
    for path in files:
        errors = list(validator.iter_errors(tomllib.loads(path.read_text(encoding="utf-8"))))
        assert not errors, (path.name, [e.message for e in errors[:3]])
    # negative controls: a version out of bounds, an unknown key
    good = tomllib.loads(files[0].read_text(encoding="utf-8"))
    for bad in ({**good, "schema_version": maskcheck.MASK_SCHEMA_VERSION + 1}, {**good, "schema_version": 0},
                {**good, "colour": "red"}):
        assert list(validator.iter_errors(bad))
    assert json.loads(json.dumps(schema)) == schema
