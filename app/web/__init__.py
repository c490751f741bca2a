"""The web layer: the app factory, one router per resource, middleware, page data and error mapping.

It validates, calls the services and renders; it computes nothing itself.
"""

from app.web.app import create_app

__all__ = ["create_app"]
