"""live"""
