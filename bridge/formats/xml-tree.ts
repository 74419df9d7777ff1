/**
 * XML text → a small tree of elements in document order, through saxes (a
 * conforming, non-validating XML 1.0 parser), for the MusicXML reader.
 *
 * Safe on hostile input: a DOCTYPE that declares entities is refused (a few
 * nested declarations can expand to gigabytes, the "billion laughs"), and
 * saxes itself expands no entity beyond XML's five predefined ones and
 * character references. Depth and element count are capped, so memory stays
 * in proportion to the text, which the caller caps by size.
 *
 * @example
 *   const root = xmlTree('<a x="1"><b>hi</b><b/></a>', 'f.xml');
 *   root.name                 // → 'a'
 *   childText(root, 'b')      // → 'hi'
 *   children(root, 'b').length   // → 2
 */
import { SaxesParser } from 'saxes';
import { ScoreFileError } from './score-piece.js';

export interface XmlElement {
  name: string;
  attrs: Record<string, string>;
  children: XmlElement[];
  /** The element's own text (character data directly inside it), trimmed. */
  text: string;
}

export interface XmlLimits {
  /** Deepest nesting of elements accepted. */
  maxDepth: number;
  /** Most elements accepted. */
  maxElements: number;
}

/** MusicXML nests about 8 deep; a full orchestral score has a few million elements. */
export const XML_LIMITS: XmlLimits = { maxDepth: 64, maxElements: 4_000_000 };

/** Parses XML text into its root element. Throws ScoreFileError naming `file` on anything that is not well-formed XML or passes a limit. */
export function xmlTree(text: string, file: string, limits: XmlLimits = XML_LIMITS): XmlElement {
  const parser = new SaxesParser({ position: true });
  const stack: XmlElement[] = [];
  const texts: string[][] = [];
  let root: XmlElement | null = null;
  let count = 0;
  const refuse = (reason: string): never => {
    throw new ScoreFileError(file, reason);
  };
  parser.on('doctype', (doctype) => {
    if (/<!ENTITY/i.test(doctype)) refuse('declares entities in its DOCTYPE (<!ENTITY …>), which earwitness does not expand: a few such lines can expand to gigabytes. Remove the declarations, or export the score again');
  });
  parser.on('opentag', (tag) => {
    if (++count > limits.maxElements) refuse(`holds more than ${limits.maxElements.toLocaleString('en')} XML elements, the most earwitness reads from one score`);
    if (stack.length >= limits.maxDepth) refuse(`nests XML elements more than ${limits.maxDepth} deep, the most earwitness reads (MusicXML needs about 8)`);
    const el: XmlElement = { name: tag.name, attrs: tag.attributes as Record<string, string>, children: [], text: '' };
    if (stack.length) stack[stack.length - 1].children.push(el);
    else root = el;
    stack.push(el);
    texts.push([]);
  });
  const onText = (t: string): void => {
    if (texts.length) texts[texts.length - 1].push(t);
  };
  parser.on('text', onText);
  parser.on('cdata', onText);
  parser.on('closetag', () => {
    stack.pop()!.text = texts.pop()!.join('').trim();
  });
  try {
    parser.write(text).close();
  } catch (e) {
    if (e instanceof ScoreFileError) throw e;
    refuse(`is not well-formed XML (${(e as Error).message.replace(/^undefined:/, 'line ')})`);
  }
  return root ?? refuse('holds no XML element');
}

/** The element's children named `name`, in document order. */
export const children = (el: XmlElement, name: string): XmlElement[] => el.children.filter((c) => c.name === name);

/** The first child named `name`, if any. */
export const child = (el: XmlElement, name: string): XmlElement | undefined => el.children.find((c) => c.name === name);

/** The text of the first child named `name`, or undefined when there is none. */
export const childText = (el: XmlElement, name: string): string | undefined => child(el, name)?.text;
