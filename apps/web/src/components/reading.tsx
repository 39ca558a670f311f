/** A figure's plain reading, set beside it (the words come from `readings.ts`). */
export function Reading({ text }: { text: string }) {
  return <span class="reading">{text}</span>;
}
