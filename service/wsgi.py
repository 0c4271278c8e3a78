"""The WSGI object production serves: ``gunicorn service.wsgi:app`` (config in deploy/)."""

from service.app import create_app

app = create_app()
