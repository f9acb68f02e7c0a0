"""Calculation records on the web: the review section of the case page and its steps, the signed record PDFs,
the trust root and the page that verifies a record file; the app's record signer."""
