"""circuit"""
