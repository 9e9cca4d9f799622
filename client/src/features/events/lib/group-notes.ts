/**
 * An origin's notes with the same message for several channels said once: notes of the form
 * "NET.STA.LOC.CHA: message" that share their message become one line
 * "message — N channels: NET.STA.LOC.CHA, …", in the order the first of each appeared; notes of any
 * other form are kept as they are. Pure; the input is not modified.
 */
export function groupChannelNotes(notes: readonly string[]): string[] {
  const streamNote = /^([A-Z0-9]{1,2}\.[A-Z0-9]{1,5}\.[A-Z0-9-]{0,2}\.[A-Z0-9]{3}): (.+)$/i;
  const out: Array<{ message: string; streams: string[] } | string> = [];
  const byMessage = new Map<string, { message: string; streams: string[] }>();
  for (const note of notes) {
    const m = streamNote.exec(note);
    if (!m) {
      out.push(note);
      continue;
    }
    const [, stream = '', message = ''] = m;
    const group = byMessage.get(message);
    if (group) group.streams.push(stream);
    else {
      const g = { message, streams: [stream] };
      byMessage.set(message, g);
      out.push(g);
    }
  }
  return out.map((g) => (typeof g === 'string' ? g : g.streams.length === 1 ? `${g.streams[0] ?? ''}: ${g.message}` : `${g.message[0]?.toUpperCase() ?? ''}${g.message.slice(1)} — ${g.streams.length} channels: ${g.streams.join(', ')}`));
}
