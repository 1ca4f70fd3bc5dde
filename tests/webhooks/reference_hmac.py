"""Reference digests for tests/webhooks/signing.test.ts, from Python's standard hmac and hashlib (RFC 2104).

Run: python3 tests/webhooks/reference_hmac.py — prints the signature header value for each case; the test
holds the printed values beside its checks.
"""
import hashlib
import hmac

CASES = [
    ("bws_fixed-test-secret", 1700000000, '{"id":"alert.opened:alert-1","event":"alert.opened"}'),
    ("another secret, with spaces", 1767225600, '{"text":"Niveau \u00e9lev\u00e9 \u2014 \u03c4 0.62"}'),
]

for secret, timestamp, body in CASES:
    message = f"{timestamp}.{body}".encode("utf-8")
    print("sha256=" + hmac.new(secret.encode("utf-8"), message, hashlib.sha256).hexdigest())
