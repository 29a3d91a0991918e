"""The site: every guide built (cached, in parallel), published atomically, served for preview."""
