"""Batch screening pages: upload a letdown list, follow the background job, see and download its results."""
