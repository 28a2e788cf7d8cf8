"""marshmallow schemas: request envelopes (validated on every call) and response
documents (the source of the OpenAPI document; tests check every response against
them)."""
