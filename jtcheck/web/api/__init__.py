"""The JSON API (``/api/v1``): its routes, the OpenAPI registry and schemas, and the JSON form of stored records."""
