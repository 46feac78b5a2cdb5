import type { DecodeIssue } from '../types';

/** Most issues repeat (one bad value per row); past this many only the count grows. */
const MAX_KEPT = 100;

/** Collects a reader's problems as values; the first fatal one stops the reader. */
export class IssueLog {
  readonly issues: DecodeIssue[] = [];
  /** issues not kept because the list was full */
  dropped = 0;
  fatalIssue: DecodeIssue | null = null;

  add(issue: DecodeIssue): void {
    if (this.issues.length < MAX_KEPT) this.issues.push(issue);
    else this.dropped++;
  }

  fatal(issue: DecodeIssue): void {
    if (this.fatalIssue) return;
    this.fatalIssue = issue;
    this.add(issue);
  }
}
