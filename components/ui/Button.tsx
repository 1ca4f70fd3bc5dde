import type { ButtonHTMLAttributes } from 'react';

/**
 * The product's buttons: `primary` for the one action a panel exists for, `secondary` for the others, `quiet` for
 * link-like actions inside tables and lists, `danger` for removing something. Sizes: `sm` inside tables and
 * figure captions, `md` everywhere else, `lg` for a form's only button.
 */
export type ButtonVariant = 'primary' | 'secondary' | 'quiet' | 'danger';
export type ButtonSize = 'sm' | 'md' | 'lg';

const VARIANTS: Record<ButtonVariant, string> = {
  primary: 'bg-tide font-medium text-white hover:bg-tide-dark',
  secondary: 'border border-rule hover:bg-paper',
  quiet: 'text-tide hover:underline',
  danger: 'text-warning hover:underline',
};
const SIZES: Record<ButtonSize, string> = {
  sm: 'px-2 py-0.5 text-xs',
  md: 'px-3 py-1.5 text-sm',
  lg: 'px-4 py-2',
};

/** The classes of a button, for links that look like one (`<Link className={buttonClass('primary')}>`). */
export function buttonClass(variant: ButtonVariant = 'secondary', size: ButtonSize = 'md', extra = ''): string {
  return `inline-block rounded disabled:opacity-50 ${VARIANTS[variant]} ${SIZES[size]}${extra ? ` ${extra}` : ''}`;
}

/** A button (type "button" unless told otherwise, so it never submits a form by accident). */
export function Button({
  variant = 'secondary',
  size = 'md',
  className = '',
  type = 'button',
  ...props
}: ButtonHTMLAttributes<HTMLButtonElement> & {
  variant?: ButtonVariant;
  size?: ButtonSize;
}) {
  return <button type={type} className={buttonClass(variant, size, className)} {...props} />;
}
