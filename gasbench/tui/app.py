def run_app(profile_path, journal_path):
    raise NotImplementedError
