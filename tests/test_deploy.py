"""deploy/: Kubernetes manifests validated offline, the compose file and the nginx config checked.

Schemas: kubernetes-validate (the Kubernetes OpenAPI schemas, strict mode: unknown fields are
errors). Rules: Kubernetes documentation ("Configure Liveness, Readiness and Startup Probes";
"Configure a Security Context"; "Horizontal Pod Autoscaling", autoscaling/v2), the Compose
Specification (services, deploy.replicas, depends_on conditions), nginx's
ngx_http_upstream_module and ngx_http_proxy_module documentation (proxy_next_upstream).
"""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
from pathlib import Path

import kubernetes_validate
import pytest
import yaml

from tests.live.dockerfile import container_command, container_environment

ROOT = Path(__file__).resolve().parents[1]
DEPLOY = ROOT / "deploy"
K8S = sorted((DEPLOY / "k8s").glob("*.yaml"))
KUBERNETES_VERSION = "1.30"  # oldest still-supported minor we target; strict schemas


def documents() -> list[dict]:
    docs = []
    for path in K8S:
        docs += [d for d in yaml.safe_load_all(path.read_text()) if d]
    return docs


def by_kind(kind: str) -> dict:
    found = [d for d in documents() if d["kind"] == kind]
    assert len(found) == 1, f"expected one {kind}, found {len(found)}"
    return found[0]


def test_manifests_exist():
    kinds = {d["kind"] for d in documents()}
    assert {"Deployment", "Service", "HorizontalPodAutoscaler", "PodDisruptionBudget"} <= kinds


@pytest.mark.parametrize("doc", documents(), ids=lambda d: f"{d['kind']}/{d['metadata']['name']}")
def test_manifest_validates_against_the_kubernetes_schema(doc):
    kubernetes_validate.validate(doc, KUBERNETES_VERSION, strict=True)


def test_schema_validation_can_fail():
    broken = by_kind("Deployment")
    broken = {**broken, "spec": {**broken["spec"], "replicaz": 2}}
    with pytest.raises(kubernetes_validate.ValidationError):
        kubernetes_validate.validate(broken, KUBERNETES_VERSION, strict=True)


def _container() -> dict:
    containers = by_kind("Deployment")["spec"]["template"]["spec"]["containers"]
    assert len(containers) == 1
    return containers[0]


def _env(container: dict) -> dict:
    return {e["name"]: e.get("value") for e in container.get("env", [])}


def test_probes_point_at_the_health_routes():
    container = _container()
    assert container["readinessProbe"]["httpGet"]["path"] == "/readyz"
    assert container["livenessProbe"]["httpGet"]["path"] == "/healthz"
    assert container["startupProbe"]["httpGet"]["path"] == "/healthz"
    port_names = {p["name"]: p["containerPort"] for p in container["ports"]}
    for probe in ("readinessProbe", "livenessProbe", "startupProbe"):
        assert container[probe]["httpGet"]["port"] in port_names


def test_the_container_port_is_the_port_gunicorn_binds():
    container = _container()
    env = {**container_environment(), **_env(container)}
    assert container["ports"][0]["containerPort"] == int(env["PELLET_PORT"])
    assert env["PELLET_HOST"] == "0.0.0.0"
    # The Dockerfile's CMD runs unchanged: no command/args override.
    assert "command" not in container and "args" not in container
    assert container_command()[0] == "gunicorn"


def test_resources_requests_and_limits():
    resources = _container()["resources"]
    for kind in ("requests", "limits"):
        assert {"cpu", "memory"} <= set(resources[kind])


def test_runs_as_non_root_with_a_read_only_root():
    pod = by_kind("Deployment")["spec"]["template"]["spec"]
    container = _container()
    assert pod["securityContext"]["runAsNonRoot"] is True
    assert pod["securityContext"]["runAsUser"] == 10001  # the Dockerfile's service user
    assert container["securityContext"]["allowPrivilegeEscalation"] is False
    assert container["securityContext"]["readOnlyRootFilesystem"] is True
    assert container["securityContext"]["capabilities"]["drop"] == ["ALL"]
    # A read-only root needs a writable place for the metric files of the workers.
    mounts = {m["mountPath"] for m in container["volumeMounts"]}
    metrics_dir = _env(container)["PROMETHEUS_MULTIPROC_DIR"]
    assert any(metrics_dir == m or metrics_dir.startswith(m.rstrip("/") + "/") for m in mounts)


def test_termination_grace_exceeds_gunicorns_graceful_timeout():
    pod = by_kind("Deployment")["spec"]["template"]["spec"]
    graceful = 20  # gunicorn.conf.py: PELLET_GRACEFUL_TIMEOUT default
    pre_stop = int(_container()["lifecycle"]["preStop"]["exec"]["command"][-1])
    assert pod["terminationGracePeriodSeconds"] > graceful + pre_stop


def test_service_selects_the_pods():
    service = by_kind("Service")
    labels = by_kind("Deployment")["spec"]["template"]["metadata"]["labels"]
    assert service["spec"]["selector"].items() <= labels.items()
    assert service["spec"]["ports"][0]["targetPort"] in {p["name"] for p in _container()["ports"]}


def test_hpa_scales_the_deployment():
    hpa = by_kind("HorizontalPodAutoscaler")
    assert hpa["apiVersion"] == "autoscaling/v2"
    target = hpa["spec"]["scaleTargetRef"]
    assert (target["kind"], target["name"]) == ("Deployment", by_kind("Deployment")["metadata"]["name"])
    assert 1 <= hpa["spec"]["minReplicas"] <= hpa["spec"]["maxReplicas"]
    # Utilization is relative to the request: the container must request CPU.
    assert _container()["resources"]["requests"]["cpu"]


def test_pdb_keeps_a_pod_and_selects_the_pods():
    pdb = by_kind("PodDisruptionBudget")
    labels = by_kind("Deployment")["spec"]["template"]["metadata"]["labels"]
    assert pdb["spec"]["selector"]["matchLabels"].items() <= labels.items()
    assert pdb["spec"]["minAvailable"] < by_kind("HorizontalPodAutoscaler")["spec"]["minReplicas"]


# ----------------------------------------------------------------------------- compose + nginx


@pytest.fixture(scope="module")
def compose() -> dict:
    return yaml.safe_load((DEPLOY / "compose.yaml").read_text())


def test_compose_structure(compose):
    services = compose["services"]
    assert set(services) == {"pellet", "proxy"}
    app = services["pellet"]
    assert app["deploy"]["replicas"] >= 2
    assert "ports" not in app, "replicas are reached through the proxy only"
    assert app["build"]["dockerfile"] == "Dockerfile"
    assert (DEPLOY / app["build"]["context"] / "Dockerfile").resolve() == ROOT / "Dockerfile"
    assert app["user"] == "10001:10001" and app["read_only"] is True
    assert "/tmp" in app["tmpfs"]
    assert app["environment"]["PROMETHEUS_MULTIPROC_DIR"].startswith("/tmp/")
    proxy = services["proxy"]
    assert proxy["depends_on"]["pellet"]["condition"] == "service_healthy"
    assert all(p.startswith("127.0.0.1:") for p in proxy["ports"]), "loopback only"
    mounted = [v.split(":")[0] for v in proxy["volumes"]]
    assert (DEPLOY / mounted[0]).resolve() == DEPLOY / "nginx" / "nginx.conf"


def _directive(conf: str, name: str) -> list[str]:
    return re.findall(rf"^\s*{name}\s+([^;]*);", conf, flags=re.MULTILINE)


def test_nginx_config_retries_and_points_at_the_replicas(compose):
    conf = (DEPLOY / "nginx" / "nginx.conf").read_text()
    upstream_port = compose["services"]["pellet"]["expose"][0]
    assert _directive(conf, "server")[0].startswith(f"pellet:{upstream_port} ")
    next_upstream = _directive(conf, "proxy_next_upstream")[0].split()
    assert {"error", "timeout", "http_502", "http_503", "non_idempotent"} <= set(next_upstream)
    assert _directive(conf, "proxy_pass") == ["http://pellet"]
    # The proxy's read timeout outlasts gunicorn's hard timeout (gunicorn.conf.py, 30 s).
    assert int(_directive(conf, "proxy_read_timeout")[0].rstrip("s")) > 30
    port = compose["services"]["proxy"]["ports"][0].split(":")[-1]
    assert _directive(conf, "listen") == [port]


def test_failover_bench_config_has_the_same_retry_policy(tmp_path):
    sys.path.insert(0, str(ROOT / "bench"))
    try:
        import failover
    finally:
        sys.path.remove(str(ROOT / "bench"))
    generated = failover.nginx_config(tmp_path, 18080, 18081, 18082)
    deployed = (DEPLOY / "nginx" / "nginx.conf").read_text()
    for name in ("proxy_next_upstream", "proxy_next_upstream_tries", "proxy_read_timeout"):
        assert _directive(generated, name) == _directive(deployed, name)
    assert _directive(generated, "listen") == ["127.0.0.1:18080"]
    if shutil.which("nginx") is None:
        return  # nginx -t below only where Debian's nginx is installed
    (tmp_path / "conf").mkdir()
    conf = tmp_path / "conf" / "nginx.conf"
    conf.write_text(failover.nginx_config(tmp_path / "conf", 18080, 18081, 18082))
    (tmp_path / "conf").chmod(0o755)
    checked = subprocess.run(["nginx", "-t", "-q", "-p", str(tmp_path / "conf"), "-e",
                              str(tmp_path / "conf" / "error.log"), "-c", str(conf)],
                             capture_output=True, text=True, timeout=30)
    assert checked.returncode == 0, checked.stderr
