import { firstValueFrom, of } from 'rxjs';
import { z } from 'zod';
import { toProblem } from '../errors/problem';
import { MalformedAnswer, parseAnswer } from './parse-answer';

const schema = z.object({ id: z.string(), windingNumber: z.number().nullable() });

describe('parseAnswer', () => {
  it('passes a fitting answer on, parsed', async () => {
    await expect(firstValueFrom(of({ id: 'a', windingNumber: null, extra: 1 }).pipe(parseAnswer(schema)))).resolves.toEqual({ id: 'a', windingNumber: null });
  });

  it('turns a malformed answer into an error naming the field, which toProblem words for the snackbar', async () => {
    const failed = firstValueFrom(of({ id: 'a' }).pipe(parseAnswer(schema, 'run')));
    await expect(failed).rejects.toBeInstanceOf(MalformedAnswer);
    const err = await failed.catch((e: unknown) => e);
    const problem = toProblem(err);
    expect(problem.code).toBe('bad_payload');
    expect(problem.message).toContain("server's run");
    expect(problem.message).toContain('windingNumber');
  });
});
