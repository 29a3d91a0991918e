"""specs"""
