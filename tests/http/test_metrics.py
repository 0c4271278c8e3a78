"""GET /metrics: Prometheus text format (exposition format 0.0.4) counting requests and verdicts."""


def _sample(text: str, prefix: str) -> float:
    for line in text.splitlines():
        if line.startswith(prefix):
            return float(line.rsplit(" ", 1)[1])
    raise AssertionError(f"no sample {prefix!r} in:\n{text}")


def test_metrics_count_requests_routes_and_verdicts(client, post_plan, plan):
    assert post_plan(plan).status_code == 200
    assert client.get("/no/such/path").status_code == 404
    response = client.get("/metrics")
    assert response.status_code == 200
    assert response.content_type.startswith("text/plain; version=0.0.4")
    text = response.get_data(as_text=True)
    assert "# TYPE burnproof_http_requests_total counter" in text
    requests = 'burnproof_http_requests_total{method="POST",route="/v1/validations",status="200"}'
    assert _sample(text, requests) == 1
    unmatched = 'burnproof_http_requests_total{method="GET",route="(unmatched)",status="404"}'
    assert _sample(text, unmatched) == 1
    verdicts = sum(
        _sample(text, f'burnproof_validations_total{{verdict="{v}"}}')
        for v in ("pass", "warn", "fail")
    )
    assert verdicts == 1
    assert _sample(text, 'burnproof_http_request_seconds_total{method="POST"') > 0.0
