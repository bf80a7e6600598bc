/**
 * The command argv names: the first word that is not an option (`help CMD` names CMD). Its own tiny module
 * because the built `nkledger` process reads it before loading anything else, to pick the command's bundle
 * (scripts/build.js), and run.ts uses the same rule to pick the command module.
 */
export function commandName(argv: string[]): string | undefined {
  const words = argv.filter((a) => !a.startsWith('-'));
  return words[0] === 'help' ? words[1] : words[0];
}
