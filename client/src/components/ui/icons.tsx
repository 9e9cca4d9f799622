import type { ReactNode, SVGProps } from 'react';

/** Props of every icon: size in px; icons are decorative (aria-hidden) unless given a title. */
export type IconProps = Omit<SVGProps<SVGSVGElement>, 'children'> & { size?: number; title?: string };

function Svg({ size = 16, title, children, ...svg }: IconProps & { children: ReactNode }) {
  return (
    <svg
      width={size}
      height={size}
      viewBox="0 0 16 16"
      fill="none"
      stroke="currentColor"
      strokeWidth={1.5}
      strokeLinecap="round"
      strokeLinejoin="round"
      aria-hidden={title ? undefined : true}
      role={title ? 'img' : undefined}
      focusable="false"
      {...svg}
    >
      {title ? <title>{title}</title> : null}
      {children}
    </svg>
  );
}

/** A sun: light theme. */
export function SunIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <circle cx="8" cy="8" r="3" />
      <path d="M8 1.5v1.5M8 13v1.5M1.5 8H3M13 8h1.5M3.4 3.4l1 1M11.6 11.6l1 1M3.4 12.6l1-1M11.6 4.4l1-1" />
    </Svg>
  );
}

/** A crescent: dark theme. */
export function MoonIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <path d="M13 10.2A5.5 5.5 0 0 1 5.8 3a5.5 5.5 0 1 0 7.2 7.2Z" />
    </Svg>
  );
}

/** A half-filled disc: follow the system. */
export function AutoIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <circle cx="8" cy="8" r="5.5" />
      <path d="M8 2.5a5.5 5.5 0 0 1 0 11Z" fill="currentColor" />
    </Svg>
  );
}

/** A cross: close. */
export function CloseIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <path d="M4 4l8 8M12 4l-8 8" />
    </Svg>
  );
}

/** A tick. */
export function CheckIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <path d="M3 8.5l3 3 7-7" />
    </Svg>
  );
}

/** A triangle with a bar: caution. */
export function CautionIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <path d="M8 1.8 15 14H1Z" />
      <path d="M8 6v3.6M8 11.6v.1" />
    </Svg>
  );
}

/** An empty tray: nothing to show. */
export function TrayIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <path d="M1.5 9.5 3.5 3h9l2 6.5v3.5h-13Z" />
      <path d="M1.5 9.5h4l1 1.5h3l1-1.5h4" />
    </Svg>
  );
}

/** A down chevron (select arrows). */
export function ChevronDownIcon(props: IconProps) {
  return (
    <Svg {...props}>
      <path d="M4 6l4 4 4-4" />
    </Svg>
  );
}
