"""marshmallow schemas: request validation into plain SI dataclasses, response shaping."""
