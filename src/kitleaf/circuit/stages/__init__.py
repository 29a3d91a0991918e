"""circuit/stages"""
