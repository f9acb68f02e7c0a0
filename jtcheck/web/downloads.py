"""File downloads: bytes answered as an attachment with its file name (record PDFs, trust root, batch files)."""
from __future__ import annotations

from flask import Response


def attachment(data: bytes, mimetype: str, filename: str) -> Response:
    """``data`` as a download named ``filename`` (the name is made by the app, never taken from a user)."""
    resp = Response(data, mimetype=mimetype)
    resp.headers["Content-Disposition"] = f'attachment; filename="{filename}"'
    resp.headers["Content-Length"] = str(len(data))
    return resp
