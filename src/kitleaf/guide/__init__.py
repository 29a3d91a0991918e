"""guide"""
