"""Browser (end-to-end) tests of the web service: Playwright driving Debian's chromium."""
