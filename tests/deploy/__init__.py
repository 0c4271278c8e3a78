"""Tests of the deploy/ directory: gunicorn settings, container, Kubernetes manifests, processes."""
