"""Throwaway certificates for the TLS process tests, made with the `openssl`
command-line tool (Debian package openssl) into a temporary directory: a test
CA, server certificates signed by it or by a second CA nobody trusts.

Not a test itself (imported by test_alarm_https.py and test_alarm_mqtt_tls.py).
"""

import os
import subprocess


def _run(args, cwd):
    subprocess.run(["openssl", *args], cwd=cwd, check=True, stdout=subprocess.DEVNULL,
                   stderr=subprocess.DEVNULL)


def make_ca(directory, name):
    """A self-signed CA (P-256): returns (cert path, key path)."""
    cert = os.path.join(directory, name + ".pem")
    key = os.path.join(directory, name + ".key")
    _run(["req", "-x509", "-newkey", "ec", "-pkeyopt", "ec_paramgen_curve:prime256v1",
          "-nodes", "-keyout", key, "-out", cert, "-days", "2", "-subj",
          "/O=heft tests/CN=" + name,
          "-addext", "basicConstraints=critical,CA:TRUE",
          "-addext", "keyUsage=critical,keyCertSign,cRLSign"], directory)
    return cert, key


def make_server_cert(directory, name, ca, sans):
    """A server certificate signed by `ca` (cert, key) for the subjectAltName
    entries `sans` (e.g. "DNS:localhost,IP:127.0.0.1"): returns (cert, key)."""
    cert = os.path.join(directory, name + ".pem")
    key = os.path.join(directory, name + ".key")
    csr = os.path.join(directory, name + ".csr")
    ext = os.path.join(directory, name + ".ext")
    with open(ext, "w") as f:
        f.write("basicConstraints=CA:FALSE\nkeyUsage=critical,digitalSignature\n"
                "extendedKeyUsage=serverAuth\nsubjectAltName=%s\n" % sans)
    _run(["req", "-new", "-newkey", "ec", "-pkeyopt", "ec_paramgen_curve:prime256v1",
          "-nodes", "-keyout", key, "-out", csr, "-subj", "/O=heft tests/CN=" + name],
         directory)
    _run(["x509", "-req", "-in", csr, "-CA", ca[0], "-CAkey", ca[1], "-CAcreateserial",
          "-out", cert, "-days", "2", "-extfile", ext], directory)
    return cert, key
