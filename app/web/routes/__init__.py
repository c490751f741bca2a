"""One APIRouter module per resource; `app.web.app.create_app` includes them."""
