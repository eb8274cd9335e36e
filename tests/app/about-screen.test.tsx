import { act, create, type ReactTestRenderer } from 'react-test-renderer';
import { AboutScreen } from '../../components/features/about/about-screen';
import { Txt } from '../../components/ui/text';
import { fonts } from '../../components/theme';
import { CAUTIONS } from '../../shared/cautions';

function allText(r: ReactTestRenderer): string {
  return r.root
    .findAll((n) => typeof n.props?.children === 'string')
    .map((n) => n.props.children as string)
    .join(' ');
}

describe('AboutScreen', () => {
  it('shows every caution from shared/cautions', async () => {
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(<AboutScreen />);
    });
    const text = allText(r);
    for (const c of CAUTIONS) expect(text).toContain(c);
    expect(text).toMatch(/prove nothing alone/);
  });
});

describe('Txt', () => {
  it('uses the shipped body face, and the mono face for figures', async () => {
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(
        <>
          <Txt testID="a">words</Txt>
          <Txt testID="b" figures bold>
            1,234.00
          </Txt>
        </>,
      );
    });
    const style = (id: string) => {
      const node = r.root.findAll((n) => n.props?.testID === id && Boolean(n.props?.style))[0];
      return Object.assign({}, ...[node.props.style].flat(3).filter(Boolean));
    };
    expect(style('a').fontFamily).toBe(fonts.body);
    expect(style('b').fontFamily).toBe(fonts.figuresBold);
  });
});
