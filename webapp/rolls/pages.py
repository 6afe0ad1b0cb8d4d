"""The roll register's pages (placeholder until the pages land)."""

from flask import Blueprint

from webapp.auth.csrf import protect

bp = Blueprint("rolls", __name__)
protect(bp)
