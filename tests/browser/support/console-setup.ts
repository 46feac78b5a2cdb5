import { afterEach } from 'vitest';
import { takeConsoleProblems } from './console';

// Every browser test ends quiet: a console error or warning, or an uncaught page error, that the
// test did not allow fails it, with the messages in the failure.
afterEach(() => {
  const problems = takeConsoleProblems();
  if (problems.length > 0) {
    throw new Error(`The page logged ${problems.length === 1 ? 'a problem' : `${problems.length} problems`} the test did not cause on purpose:\n  ${problems.join('\n  ')}`);
  }
});
