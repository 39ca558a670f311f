import { describe, expect, it } from 'vitest';
import { handlerTable, type JobHandler } from './job-handler.js';
import { JOBS } from './queue-names.js';

const handler = (jobName: JobHandler['jobName']): JobHandler => ({ jobName, handle: async () => undefined });

describe('handlerTable', () => {
  it('accepts exactly one handler per job name', () => {
    const all = Object.values(JOBS).map(handler);
    expect([...handlerTable(all).keys()].sort()).toEqual(Object.values(JOBS).sort());
  });
  it('fails when a job has no handler', () => {
    expect(() => handlerTable([handler(JOBS.importFile)])).toThrow(/job reseed-desk has no handler/);
  });
  it('fails when a job has two handlers', () => {
    const all = Object.values(JOBS).map(handler);
    expect(() => handlerTable([...all, handler(JOBS.importFile)])).toThrow(/job import-file has two handlers/);
  });
});
