/** Text that every `--help` carries: the caution at the top level, an example under each command. */

export { CAUTION } from '../model/caution.js';

/** One example per command (the invented demo deck's files), shown under its options. */
export const EXAMPLES: Record<string, string> = {
  calc: 'strainward calc -c config/brannock-mere.yaml -g flange-south-mid1 -r lg-span1/ch04=512.5 -t 14.2',
  run: 'strainward run -c config/brannock-mere.run.yaml --status-every 60',
  ack: 'strainward ack -c config/brannock-mere.run.yaml --alarm <alarm id> --user <login> --reason "crew on site, gauge checked"',
  record: 'strainward record -c config/brannock-mere.run.yaml --dir var/capture-commissioning',
  replay: 'strainward replay --capture var/capture -s config/brannock-mere.yaml --report var/replay/report.html',
  status: 'strainward status -c config/brannock-mere.run.yaml --wait-ms 3000',
  validate: 'strainward validate -c config/brannock-mere.run.yaml',
  rezero: 'strainward rezero -c config/brannock-mere.run.yaml --group web-south-pier --user duty-engineer-1 --reason "gauge rw-sp-b re-bonded after repair"',
  alarms: 'strainward alarms -c config/brannock-mere.run.yaml --json',
};

/** Wraps `text` at `width` columns, each line indented by `indent`. */
export function wrap(text: string, width = 78, indent = ''): string {
  const lines: string[] = [];
  let line = '';
  for (const word of text.split(/\s+/)) {
    if (line !== '' && indent.length + line.length + 1 + word.length > width) {
      lines.push(indent + line);
      line = word;
    } else line = line === '' ? word : `${line} ${word}`;
  }
  if (line !== '') lines.push(indent + line);
  return lines.join('\n');
}
