"""The HTTP layer: blueprints, schemas, request parsing, output and errors. No
statistics live here."""
