// Runs before every test file. Keep it small: per-test state belongs in the tests' own helpers.
process.env.TZ = "UTC";
