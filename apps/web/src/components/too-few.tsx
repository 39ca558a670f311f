import { TOO_FEW } from '../format';

/** The mark beside a figure measured on fewer than {@link TOO_FEW} items: it says how many, in words. */
export function TooFew({ n, of = 'items' }: { n: number; of?: string }) {
  if (n >= TOO_FEW) return null;
  return (
    <span class="tag too-few" title={`measured on ${n} ${of}, fewer than ${TOO_FEW}: too rough to read alone`}>
      too few ({n})
    </span>
  );
}
