"""``GET /healthz``: is the service up, and does the database answer (for load balancers and monitors)."""
from __future__ import annotations

from flask import Blueprint, jsonify

from jtcheck.web.database import get_db

bp = Blueprint("health", __name__)


@bp.route("/healthz")
def healthz():
    if get_db().ping():
        return jsonify({"status": "ok", "database": "ok"})
    resp = jsonify({"status": "degraded", "database": "unreachable"})
    resp.status_code = 503
    return resp
