/** Name and password of each account, read back from the block `start` prints after seeding the demo. */
export function accountsInBlock(block: string): Map<string, string> {
  return new Map([...block.matchAll(/^ {4}(\S+)\s+password: (\S+)$/gm)].map((m) => [m[1], m[2]]));
}
